// Server-side sessions (issue 6, finding 1): a session ends for good on sign-out, deactivation, a role or password
// change, an admin's "sign out everywhere", after 30 minutes idle and 12 hours after sign-in
// (server/services/sessions.ts says why those two). A copy of the cookie taken before the end opens nothing after it.
import { createHash, randomUUID } from 'node:crypto'
import { readFileSync } from 'node:fs'
import { beforeAll, describe, expect, inject, it } from 'vitest'
import { sealSession, unsealSession } from 'h3'
import { drizzle } from 'drizzle-orm/postgres-js'
import postgres from 'postgres'
import { Client, database, demo, newPerson, signedIn } from './support/client'
import { setPassword } from '../../server/services/passwords'

// The test app's session password (scripts/app-env), to read and write sealed cookies as nuxt-auth-utils does (h3's seal).
const sessionConfig = () => ({
  name: 'nuxt-session',
  password: readFileSync(new URL('../../.data/session-password', import.meta.url), 'utf8').trim(),
  maxAge: 12 * 3600,
})

async function unsealed(cookie: string): Promise<any> {
  return unsealSession(null as never, sessionConfig(), decodeURIComponent(cookie.slice(cookie.indexOf('=') + 1)))
}

async function sealedCookie(data: Record<string, unknown>): Promise<string> {
  const session = { id: randomUUID(), createdAt: Date.now(), data }
  const event = { context: { sessions: { 'nuxt-session': session } } }
  return `nuxt-session=${encodeURIComponent(await sealSession(event as never, sessionConfig()))}`
}

/** A second browser holding a copy of the first one's cookie. */
function copyOf(client: Client): Client {
  const copy = new Client()
  copy.cookie = client.cookie
  return copy
}

async function lastRefusalOf(personId: number) {
  const [event] = await database()`select status, detail from audit_events
    where action = 'access.refused' and actor_id = ${personId} order by id desc limit 1`
  return event
}

async function liveSessions(personId: number): Promise<number> {
  const [row] = await database()`select count(*)::int as n from sessions where person_id = ${personId} and revoked_at is null`
  return row!.n
}

describe('server-side sessions', () => {
  let admin: Client
  beforeAll(async () => {
    admin = await signedIn(demo.admin)
  })

  it('refuses a copied cookie after sign-out, with 401, the cookie cleared and the refusal audited', async () => {
    const person = await newPerson(admin)
    const browser = await signedIn(person.email, person.password)
    const copy = copyOf(browser)
    expect((await copy.get('/api/projects')).status).toBe(200)
    expect((await browser.post('/api/auth/logout')).status).toBe(204)

    const refused = await copy.get('/api/projects')
    expect(refused.status).toBe(401)
    expect(refused.headers.get('set-cookie')).toMatch(/nuxt-session=;/)
    expect(await lastRefusalOf(person.id)).toMatchObject({ status: 401, detail: { reason: 'signed out' } })
    const [row] = await database()`select revoked_at, revoked_reason from sessions where person_id = ${person.id}`
    expect(row!.revoked_reason).toBe('signed out')
    expect(row!.revoked_at).toBeInstanceOf(Date)
  })

  it('refuses the copied cookie of an admin after sign-out on admin routes and the calculator alike', async () => {
    const browser = await signedIn(demo.admin)
    const copy = copyOf(browser)
    await browser.post('/api/auth/logout')
    expect((await copy.get('/api/people')).status).toBe(401)
    expect((await copyOf(browser).post('/api/calculate', {})).status).toBe(401)
  })

  it('does not revive old cookies when a deactivated person is reactivated: they sign in afresh', async () => {
    const person = await newPerson(admin)
    const old = await signedIn(person.email, person.password)
    const copy = copyOf(old)
    await admin.patch(`/api/people/${person.id}`, { active: false })
    await admin.patch(`/api/people/${person.id}`, { active: true })

    const revived = await copy.get('/api/projects')
    expect(revived.status).toBe(401)
    expect(await lastRefusalOf(person.id)).toMatchObject({ status: 401, detail: { reason: 'deactivated' } })
    const fresh = await signedIn(person.email, person.password)
    expect((await fresh.get('/api/projects')).status).toBe(200)
  })

  it('ends every session of a person whose roles change; the new sign-in carries the new roles', async () => {
    const person = await newPerson(admin)
    const first = await signedIn(person.email, person.password)
    const second = await signedIn(person.email, person.password, '127.0.0.2')
    expect(await liveSessions(person.id)).toBe(2)
    const changed = await admin.patch(`/api/people/${person.id}`, { roles: ['engineer', 'checker'] })
    expect(changed.status).toBe(200)
    expect((await first.get('/api/projects')).status).toBe(401)
    expect((await second.get('/api/projects')).status).toBe(401)
    expect(await lastRefusalOf(person.id)).toMatchObject({ detail: { reason: 'roles changed' } })
    const again = await signedIn(person.email, person.password)
    expect((await again.get('/api/_auth/session')).body.user.roles).toEqual(['engineer', 'checker'])
  })

  it('keeps sessions when only the name changes, and writes the new name into them', async () => {
    const person = await newPerson(admin)
    const browser = await signedIn(person.email, person.password)
    await admin.patch(`/api/people/${person.id}`, { name: `${person.name} Renamed` })
    const session = await browser.get('/api/_auth/session')
    expect(session.status).toBe(200)
    expect(session.body.user.name).toBe(`${person.name} Renamed`)
  })

  it('ends every session of a person on a password change, in the service every password change goes through', async () => {
    const person = await newPerson(admin)
    const browser = await signedIn(person.email, person.password)
    const sql = postgres(inject('databaseUrl'), { max: 1, onnotice: () => {} })
    try {
      const ended = await drizzle(sql).transaction((tx) => setPassword(tx as never, person.id, 'not-a-real-hash'))
      expect(ended).toBe(1)
    } finally {
      await sql.end()
    }
    expect((await browser.get('/api/projects')).status).toBe(401)
    expect(await lastRefusalOf(person.id)).toMatchObject({ detail: { reason: 'password changed' } })
  })

  it('lets an admin sign a person out everywhere, audited, leaving other people signed in', async () => {
    const person = await newPerson(admin)
    const bystander = await newPerson(admin)
    const here = await signedIn(person.email, person.password)
    const there = await signedIn(person.email, person.password, '127.0.0.3')
    const other = await signedIn(bystander.email, bystander.password)

    const answer = await admin.post(`/api/people/${person.id}/sessions/revoke`)
    expect(answer.status).toBe(200)
    expect(answer.body).toEqual({ endedSessions: 2 })
    expect((await here.get('/api/projects')).status).toBe(401)
    expect((await there.get('/api/projects')).status).toBe(401)
    expect((await other.get('/api/projects')).status).toBe(200)
    expect(await lastRefusalOf(person.id)).toMatchObject({ detail: { reason: 'signed out everywhere by an administrator' } })
    const [event] = await database()`select actor_id, detail from audit_events
      where action = 'person.sessions-ended' and subject_id = ${String(person.id)} order by id desc limit 1`
    const [me] = await database()`select id from people where email = ${demo.admin}`
    expect(event).toMatchObject({ actor_id: me!.id, detail: { endedSessions: 2 } })
    expect((await signedIn(person.email, person.password)).cookie).not.toBe('')
  })

  it('ends a session idle for 30 minutes', async () => {
    const person = await newPerson(admin)
    const browser = await signedIn(person.email, person.password)
    await database()`update sessions set last_seen_at = now() - interval '29 minutes' where person_id = ${person.id}`
    expect((await browser.get('/api/projects')).status).toBe(200)
    await database()`update sessions set last_seen_at = now() - interval '31 minutes' where person_id = ${person.id}`
    expect((await browser.get('/api/projects')).status).toBe(401)
    expect(await lastRefusalOf(person.id)).toMatchObject({ detail: { reason: 'idle timeout' } })
  })

  it('ends a session 12 hours after sign-in however busy it is', async () => {
    const person = await newPerson(admin)
    const browser = await signedIn(person.email, person.password)
    const [row] = await database()`select extract(epoch from expires_at - created_at)::int as seconds from sessions where person_id = ${person.id}`
    expect(row!.seconds).toBe(12 * 3600)
    await database()`update sessions set created_at = created_at - interval '12 hours', expires_at = expires_at - interval '12 hours'
      where person_id = ${person.id}`
    expect((await browser.get('/api/projects')).status).toBe(401)
    expect(await lastRefusalOf(person.id)).toMatchObject({ detail: { reason: 'absolute lifetime' } })
  })

  it('writes last_seen_at at most once a minute', async () => {
    const person = await newPerson(admin)
    const browser = await signedIn(person.email, person.password)
    await database()`update sessions set last_seen_at = now() - interval '30 seconds' where person_id = ${person.id}`
    const [before] = await database()`select last_seen_at from sessions where person_id = ${person.id}`
    await browser.get('/api/projects')
    await browser.get('/api/projects')
    const [unchanged] = await database()`select last_seen_at from sessions where person_id = ${person.id}`
    expect(unchanged!.last_seen_at).toEqual(before!.last_seen_at)
    await database()`update sessions set last_seen_at = now() - interval '61 seconds' where person_id = ${person.id}`
    await browser.get('/api/projects')
    const [touched] = await database()`select extract(epoch from now() - last_seen_at) as age from sessions where person_id = ${person.id}`
    expect(Number(touched!.age)).toBeLessThan(10)
  })

  it('seals the session id into the cookie, stores only its SHA-256, and lets the cookie expire after 12 hours', async () => {
    const person = await newPerson(admin)
    const client = new Client()
    const answer = await client.post('/api/auth/login', { email: person.email, password: person.password })
    const expires = Date.parse(answer.headers.get('set-cookie')!.match(/Expires=([^;]+)/i)![1]!)
    expect(Math.abs(expires - (Date.now() + 12 * 3600 * 1000))).toBeLessThan(60_000)
    const sealed = await unsealed(client.cookie)
    const sessionId = sealed.data.secure.sessionId
    expect(sessionId).toMatch(/^[A-Za-z0-9_-]{43}$/)
    const [row] = await database()`select token_hash from sessions where person_id = ${person.id}`
    expect(row!.token_hash).toBe(createHash('sha256').update(sessionId).digest('hex'))
    const [stored] = await database()`select count(*)::int as n from sessions where token_hash = ${sessionId}`
    expect(stored!.n).toBe(0)
  })

  it('refuses a genuinely sealed cookie naming no stored session, such as one sealed before sessions were stored', async () => {
    const person = await newPerson(admin)
    const [user] = await database()`select id, name, email, roles, organisation_id as "organisationId" from people where id = ${person.id}`
    for (const secure of [{ sessionId: 'an-id-the-server-never-issued' }, { sessionVersion: 1 }]) {
      const cookie = await sealedCookie({ user: { ...user }, secure, loggedInAt: new Date().toISOString() })
      for (const path of ['/api/_auth/session', '/api/projects']) {
        const forged = new Client()
        forged.cookie = cookie
        const answer = await forged.get(path)
        expect(answer.status, `${JSON.stringify(secure)} ${path}`).toBe(401)
        expect(answer.headers.get('set-cookie')).toMatch(/nuxt-session=;/)
      }
    }
    // The same sealing with a session the server did issue opens the routes: the refusals above are about the id.
    const browser = await signedIn(person.email, person.password)
    const genuine = new Client()
    genuine.cookie = await sealedCookie({ user: { ...user }, secure: (await unsealed(browser.cookie)).data.secure, loggedInAt: new Date().toISOString() })
    expect((await genuine.get('/api/projects')).status).toBe(200)
  })

  it('ends the session a browser still holds when it signs in again', async () => {
    const person = await newPerson(admin)
    const browser = await signedIn(person.email, person.password)
    const copy = copyOf(browser)
    expect((await browser.post('/api/auth/login', { email: person.email, password: person.password })).status).toBe(200)
    expect((await copy.get('/api/projects')).status).toBe(401)
    expect((await browser.get('/api/projects')).status).toBe(200)
  })

  it('lets a browser whose session has ended sign in again at once', async () => {
    const person = await newPerson(admin)
    const browser = await signedIn(person.email, person.password)
    const stale = copyOf(browser)
    await browser.post('/api/auth/logout')
    expect((await stale.post('/api/auth/login', { email: person.email, password: person.password })).status).toBe(200)
    expect((await stale.get('/api/projects')).status).toBe(200)
  })

  it('refuses a session whose row is gone', async () => {
    const person = await newPerson(admin)
    const browser = await signedIn(person.email, person.password)
    await database()`delete from sessions where person_id = ${person.id}`
    expect((await browser.get('/api/projects')).status).toBe(401)
    expect(await lastRefusalOf(person.id)).toBeUndefined()
    const [event] = await database()`select detail from audit_events
      where action = 'access.refused' and subject_id = ${String(person.id)} order by id desc limit 1`
    expect(event).toMatchObject({ detail: { reason: 'unknown session' } })
  })
})

describe('POST /api/people/[id]/sessions/revoke', () => {
  it('is for admins only: signed out 401, every other role 403, nothing ended', async () => {
    const admin = await signedIn(demo.admin)
    const person = await newPerson(admin)
    await signedIn(person.email, person.password)
    const path = `/api/people/${person.id}/sessions/revoke`
    expect((await new Client().post(path)).status).toBe(401)
    for (const email of [demo.engineer, demo.secondEngineer, demo.checker, demo.client]) {
      expect((await (await signedIn(email)).post(path)).status, email).toBe(403)
    }
    // A person may not end their own sessions through it either, unless an admin.
    expect((await (await signedIn(person.email, person.password)).post(path)).status).toBe(403)
    expect(await liveSessions(person.id)).toBe(2)
    expect((await admin.post(path)).status).toBe(200)
    expect(await liveSessions(person.id)).toBe(0)
  })

  it('answers 404 for an unknown person and 400 for ids that are no positive 32-bit integer, never 500', async () => {
    const admin = await signedIn(demo.admin)
    expect((await admin.post('/api/people/2147483647/sessions/revoke')).status).toBe(404)
    for (const id of ['0', '-1', '2147483648', '1e20', 'abc', '1.5', '%00']) {
      const answer = await admin.post(`/api/people/${id}/sessions/revoke`)
      expect(answer.status, id).toBe(400)
    }
  })
})

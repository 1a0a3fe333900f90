import { beforeAll, describe, expect, it } from 'vitest'
import { Client, database, demo, newPerson, signedIn, type Client as ClientType } from './support/client'

describe('deactivation and role changes', () => {
  let admin: ClientType
  beforeAll(async () => {
    admin = await signedIn(demo.admin)
  })

  it('ends a live session at once: the next request answers 401 and the session is cleared', async () => {
    const person = await newPerson(admin)
    const session = await signedIn(person.email, person.password)
    expect((await session.get('/api/projects')).status).toBe(200)

    const patched = await admin.patch(`/api/people/${person.id}`, { active: false })
    expect(patched.body.status).toBe('deactivated')

    const refused = await session.get('/api/projects')
    expect(refused.status).toBe(401)
    expect(refused.headers.get('set-cookie')).toMatch(/nuxt-session=;/)
    expect((await session.get('/api/_auth/session')).body).not.toHaveProperty('user')
    expect((await new Client().post('/api/auth/login', { email: person.email, password: person.password })).status).toBe(401)
    const [event] = await database()`select actor_id, status, detail from audit_events
      where action = 'access.refused' and actor_id = ${person.id} order by id desc limit 1`
    expect(event).toMatchObject({ status: 401, detail: { reason: 'deactivated' } })

    await admin.patch(`/api/people/${person.id}`, { active: true })
    expect((await new Client().post('/api/auth/login', { email: person.email, password: person.password })).status).toBe(200)
  })

  it('ends a live session when the roles change; signing in afresh carries the new roles (issue 6)', async () => {
    const person = await newPerson(admin)
    const session = await signedIn(person.email, person.password)
    expect((await session.get('/api/people')).status).toBe(403)
    await admin.patch(`/api/people/${person.id}`, { roles: ['engineer', 'admin'] })
    expect((await session.get('/api/people')).status).toBe(401)
    const fresh = await signedIn(person.email, person.password)
    expect((await fresh.get('/api/people')).status).toBe(200)
    expect((await fresh.get('/api/_auth/session')).body.user.roles).toEqual(['engineer', 'admin'])
  })

  it('refuses an admin removing their own admin role or deactivating themselves', async () => {
    const [me] = await database()`select id from people where email = ${demo.admin}`
    const demote = await admin.patch(`/api/people/${me!.id}`, { roles: ['engineer'] })
    expect(demote.status).toBe(403)
    const deactivate = await admin.patch(`/api/people/${me!.id}`, { active: false })
    expect(deactivate.status).toBe(403)
    const [row] = await database()`select roles, active from people where id = ${me!.id}`
    expect(row).toEqual({ roles: ['admin'], active: true })
  })

  it('refuses an empty change with 400', async () => {
    const answer = await admin.patch('/api/people/1', {})
    expect(answer.status).toBe(400)
    expect(answer.body.data.issues.formErrors).toEqual(['Nothing to change'])
  })
})

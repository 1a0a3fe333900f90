import { createHash } from 'node:crypto'
import { beforeAll, describe, expect, inject, it } from 'vitest'
import { Client, database, demo, mailTo, outboxRowsTo, signedIn, unique, type Client as ClientType } from './support/client'

describe('invitations', () => {
  let admin: ClientType
  beforeAll(async () => {
    admin = await signedIn(demo.admin)
  })

  it('goes round: invite, e-mail with a one-time link, choose a password, sign in; the link then refuses', async () => {
    const email = `${unique('invitee')}@example.com`
    const invited = await admin.post('/api/people/invite', { name: 'Ruth Anand', email, roles: ['checker'] })
    expect(invited.status).toBe(201)
    expect(invited.body).toMatchObject({ name: 'Ruth Anand', email, roles: ['checker'], status: 'invited' })

    // Written to the outbox with the person (server/services/invitations.ts), delivered by its worker.
    expect((await outboxRowsTo(email)).map((row) => row.kind)).toEqual(['person.invited'])
    const [message] = await mailTo(email)
    expect(message!.subject).toMatch(/choose a password/)
    expect((await outboxRowsTo(email))[0]!.sent).toBe(true)
    const link = message!.text.match(new RegExp(`${inject('baseUrl').replace(/\./g, '\\.')}/invitation/([A-Za-z0-9_-]{43})\\s`))
    expect(link).not.toBeNull()
    const token = link![1]!

    // Only the token's SHA-256 is stored.
    const [stored] = await database()`select token_hash, expires_at - created_at as lifetime from invitations
      where person_id = ${invited.body.id}`
    expect(stored!.token_hash).toBe(createHash('sha256').update(token).digest('hex'))
    expect(stored!.token_hash).not.toContain(token)

    expect((await new Client().post('/api/auth/login', { email, password: 'whatever-password' })).status).toBe(401)
    const opened = await new Client().get(`/api/invitations/${token}`)
    expect(opened.body).toEqual({ name: 'Ruth Anand', email })

    const mismatch = await new Client().post(`/api/invitations/${token}`, { password: 'long-enough-1', confirm: 'long-enough-2' })
    expect(mismatch.status).toBe(400)
    expect(mismatch.body.data.issues.fieldErrors.confirm).toEqual(['The two passwords differ'])

    const accepted = await new Client().post(`/api/invitations/${token}`, { password: 'ruths-new-password', confirm: 'ruths-new-password' })
    expect(accepted.status).toBe(204)
    const signIn = await new Client().post('/api/auth/login', { email, password: 'ruths-new-password' })
    expect(signIn.status).toBe(200)
    expect(signIn.body.user.roles).toEqual(['checker'])

    const again = await new Client().post(`/api/invitations/${token}`, { password: 'someone-elses-pass', confirm: 'someone-elses-pass' })
    expect(again.status).toBe(404)
    expect((await new Client().get(`/api/invitations/${token}`)).status).toBe(404)
    expect((await new Client().post('/api/auth/login', { email, password: 'someone-elses-pass' })).status).toBe(401)
  })

  it('lasts seven days, then answers 410', async () => {
    const email = `${unique('late')}@example.com`
    const invited = await admin.post('/api/people/invite', { name: 'Late Comer', email, roles: ['engineer'] })
    const [stored] = await database()`select extract(epoch from expires_at - created_at)::int as seconds from invitations
      where person_id = ${invited.body.id}`
    expect(stored!.seconds).toBe(7 * 24 * 3600)
    const token = (await mailTo(email))[0]!.text.match(/\/invitation\/([A-Za-z0-9_-]+)/)![1]!
    await database()`update invitations set expires_at = now() - interval '1 second' where person_id = ${invited.body.id}`
    expect((await new Client().get(`/api/invitations/${token}`)).status).toBe(410)
    expect((await new Client().post(`/api/invitations/${token}`, { password: 'late-but-long', confirm: 'late-but-long' })).status).toBe(410)
  })

  it('answers an unknown token with 404', async () => {
    expect((await new Client().get('/api/invitations/not-a-real-token')).status).toBe(404)
  })

  it('refuses a second account for the same address with 409', async () => {
    const answer = await admin.post('/api/people/invite', { name: 'Henrik Again', email: demo.checker, roles: ['checker'] })
    expect(answer.status).toBe(409)
    expect(await outboxRowsTo(demo.checker, 'person.invited')).toEqual([])
  })

  it('refuses a bad invitation form with its field errors and creates nobody', async () => {
    const [before] = await database()`select count(*)::int as n from people`
    const answer = await admin.post('/api/people/invite', { name: 'X', email: 'no-at-sign', roles: [] })
    expect(answer.status).toBe(400)
    expect(Object.keys(answer.body.data.issues.fieldErrors).sort()).toEqual(['email', 'name', 'roles'])
    const client = await admin.post('/api/people/invite', { name: 'Client Without Org', email: `${unique('c')}@example.com`, roles: ['client'] })
    expect(client.body.data.issues.fieldErrors.organisationId).toEqual(['A client contact belongs to a client organisation'])
    const [after] = await database()`select count(*)::int as n from people`
    expect(after!.n).toBe(before!.n)
  })
})

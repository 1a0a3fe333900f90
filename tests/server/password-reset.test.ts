// Password reset: the same answer for an unknown address, a link that works once and for one hour, sessions
// ended by the new password, and the client-address throttle.
import { describe, expect, it } from 'vitest'
import { Client, database, demo, mailWithSubject, newPerson, outboxRowsTo, signedIn, unique } from './support/client'

const subject = 'Reset your Loopwright password'
const tokenOf = (text: string) => text.match(/\/reset-password\/([A-Za-z0-9_-]+)/)![1]!

describe('password reset', () => {
  it('answers an unknown address exactly as a known one, and mails only the known one', async () => {
    const admin = await signedIn(demo.admin)
    const person = await newPerson(admin)
    const from = new Client('127.0.0.81')
    const known = await from.post('/api/auth/reset-request', { email: person.email })
    const nobody = `${unique('nobody')}@example.com`
    const unknown = await from.post('/api/auth/reset-request', { email: nobody })
    expect(known.status).toBe(202)
    expect(unknown.status).toBe(202)
    expect(unknown.body).toEqual(known.body)
    expect(await mailWithSubject(person.email, subject)).toHaveLength(1)
    // Mail is written in the transaction of the request: no outbox row for the address is no mail, ever.
    expect(await outboxRowsTo(nobody)).toEqual([])
  })

  it('sets the new password once, ends the old sessions, and stores only the token’s SHA-256', async () => {
    const admin = await signedIn(demo.admin)
    const person = await newPerson(admin)
    const session = await signedIn(person.email, person.password)
    await new Client('127.0.0.82').post('/api/auth/reset-request', { email: person.email })
    const [mail] = await mailWithSubject(person.email, subject)
    const token = tokenOf(mail!.text)
    const [stored] = await database()`select r.token_hash, extract(epoch from r.expires_at - r.created_at)::int as lifetime from password_resets r join people p on p.id = r.person_id where p.email = ${person.email}`
    expect(stored!.token_hash).not.toContain(token)
    expect(stored!.token_hash).toMatch(/^[0-9a-f]{64}$/)
    expect(stored!.lifetime).toBe(3600)
    expect((await new Client().get(`/api/auth/reset/${token}`)).body).toEqual({ email: person.email })
    const body = { password: 'a brand new password', confirm: 'a brand new password' }
    expect((await new Client().post(`/api/auth/reset/${token}`, body)).status).toBe(204)
    expect((await new Client().post(`/api/auth/reset/${token}`, body)).status).toBe(404)
    expect((await session.get('/api/projects')).status).toBe(401)
    await signedIn(person.email, 'a brand new password')
    const [audited] = await database()`select count(*)::int as n from audit_events where action = 'password.reset' and subject_id = ${String(person.id)}`
    expect(audited!.n).toBe(1)
  })

  it('refuses an expired link with 410', async () => {
    const admin = await signedIn(demo.admin)
    const person = await newPerson(admin)
    await new Client('127.0.0.83').post('/api/auth/reset-request', { email: person.email })
    const [mail] = await mailWithSubject(person.email, subject)
    await database()`update password_resets set expires_at = now() - interval '1 second' where person_id = ${person.id}`
    expect((await new Client().get(`/api/auth/reset/${tokenOf(mail!.text)}`)).status).toBe(410)
    expect((await new Client().post(`/api/auth/reset/${tokenOf(mail!.text)}`, { password: 'another long one', confirm: 'another long one' })).status).toBe(410)
  })

  it('answers 429 to a client address past ten requests in 15 minutes, whatever the addresses', async () => {
    const from = new Client('127.0.0.84')
    const statuses: number[] = []
    for (let request = 0; request < 11; request++) statuses.push((await from.post('/api/auth/reset-request', { email: `${unique('x')}@example.com` })).status)
    expect(statuses).toEqual([...Array(10).fill(202), 429])
  })
})

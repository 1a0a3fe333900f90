import { describe, expect, it } from 'vitest'
import { Client, database, demo, signedIn } from './support/client'
import { demoPassword } from '../../scripts/demo-people'

describe('sign-in', () => {
  it('signs the demo admin in with the session shape of DEVELOPERS.md', async () => {
    const client = new Client()
    const answer = await client.post('/api/auth/login', { email: demo.admin, password: demoPassword })
    expect(answer.status).toBe(200)
    expect(answer.body.user).toMatchObject({ name: 'Imogen Varga', email: demo.admin, roles: ['admin'], organisationId: null })
    expect(answer.headers.get('set-cookie')).toMatch(/HttpOnly/i)
    const session = await client.get('/api/_auth/session')
    expect(session.body.user.id).toBe(answer.body.user.id)
    expect(session.body.secure).toBeUndefined()
  })

  it('takes the e-mail address in any case', async () => {
    const answer = await new Client().post('/api/auth/login', { email: '  Dana.Whitlock@Example.com ', password: demoPassword })
    expect(answer.status).toBe(200)
    expect(answer.body.user.roles).toEqual(['client'])
    expect(answer.body.user.organisationId).toBeTypeOf('number')
  })

  it('refuses a wrong password with 401 and records the failure', async () => {
    const answer = await new Client().post('/api/auth/login', { email: demo.checker, password: 'not-the-password' })
    expect(answer.status).toBe(401)
    const [event] = await database()`select action, status, detail from audit_events
      where action = 'sign-in.failed' and detail->>'email' = ${demo.checker} order by id desc limit 1`
    expect(event).toMatchObject({ action: 'sign-in.failed', status: 401, detail: { email: demo.checker, reason: 'wrong password' } })
  })

  it('answers an unknown address exactly as a wrong password', async () => {
    const answer = await new Client().post('/api/auth/login', { email: 'nobody.here@example.com', password: 'whatever-it-is' })
    expect(answer.status).toBe(401)
    expect(answer.body.statusMessage).toBe('Wrong e-mail or password')
  })

  it('answers bad input with 400 and the field errors of the shared schema', async () => {
    const answer = await new Client().post('/api/auth/login', { email: 'not an address', password: '' })
    expect(answer.status).toBe(400)
    expect(answer.body.data.issues.fieldErrors.email).toEqual(['Enter a valid e-mail address'])
    expect(answer.body.data.issues.fieldErrors.password).toEqual(['Enter your password'])
  })

  it('signs out: the session no longer opens anything', async () => {
    const client = await signedIn(demo.engineer)
    expect((await client.get('/api/projects')).status).toBe(200)
    expect((await client.post('/api/auth/logout')).status).toBe(204)
    expect((await client.get('/api/projects')).status).toBe(401)
  })
})

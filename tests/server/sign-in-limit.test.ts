import { beforeAll, describe, expect, it } from 'vitest'
import { Client, database, demo, newPerson, signedIn } from './support/client'

// Five failed sign-ins for one account within 15 minutes answer 429 for the rest of that window (the rule).
describe('sign-in limit', () => {
  let person: Awaited<ReturnType<typeof newPerson>>
  beforeAll(async () => {
    person = await newPerson(await signedIn(demo.admin))
  })

  it('answers 429 after five failures, even to the right password, and counts in the database', async () => {
    for (let attempt = 1; attempt <= 5; attempt++) {
      const answer = await new Client().post('/api/auth/login', { email: person.email, password: `wrong-${attempt}-guess` })
      expect(answer.status, `attempt ${attempt}`).toBe(401)
    }
    const limited = await new Client().post('/api/auth/login', { email: person.email, password: person.password })
    expect(limited.status).toBe(429)
    expect(limited.body.data.retryAfterSeconds).toBeGreaterThan(14 * 60)
    expect(limited.body.data.retryAfterSeconds).toBeLessThanOrEqual(15 * 60)
    const [counted] = await database()`select count(*)::int as failures from login_attempts
      where email = ${person.email} and not succeeded`
    expect(counted!.failures).toBe(5)
    const [event] = await database()`select status from audit_events
      where action = 'sign-in.rate-limited' and detail->>'email' = ${person.email}`
    expect(event!.status).toBe(429)
  })

  it('does not hold other accounts back', async () => {
    expect((await new Client().post('/api/auth/login', { email: demo.secondEngineer, password: 'hollins-demo-2140' })).status).toBe(200)
  })

  it('opens again once the failures are older than 15 minutes', async () => {
    await database()`update login_attempts set at = at - interval '16 minutes' where email = ${person.email}`
    const answer = await new Client().post('/api/auth/login', { email: person.email, password: person.password })
    expect(answer.status).toBe(200)
  })

  it('counts only failures since the last successful sign-in', async () => {
    for (let attempt = 1; attempt <= 4; attempt++) {
      await new Client().post('/api/auth/login', { email: person.email, password: `wrong-again-${attempt}` })
    }
    expect((await new Client().post('/api/auth/login', { email: person.email, password: person.password })).status).toBe(200)
    for (let attempt = 1; attempt <= 4; attempt++) {
      expect((await new Client().post('/api/auth/login', { email: person.email, password: `still-wrong-${attempt}` })).status).toBe(401)
    }
    expect((await new Client().post('/api/auth/login', { email: person.email, password: person.password })).status).toBe(200)
  })
})

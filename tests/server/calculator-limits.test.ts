// Issue 6, finding 4: nobody can starve the calculator. The pool serves each person in turn and leaves a
// worker for others; a person's calculations in flight and per minute are limited (429 with Retry-After);
// clients, who have no use for the calculator (product.md), are refused it and the templates.
import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { Client, database, demo, newPerson, signedIn } from './support/client'
import { heavyLoop, smallLoop } from './support/loops'

const booster = JSON.parse(readFileSync(new URL('../../../shared/examples/booster-pressure.json', import.meta.url), 'utf8'))

async function refusalsOf(email: string, path: string): Promise<number> {
  const [row] = await database()`select count(*)::int as n from audit_events a join people p on p.id = a.actor_id
    where a.action = 'access.refused' and a.status = 403 and a.path = ${path} and p.email = ${email}`
  return row!.n
}

describe('the calculator and the templates are closed to clients', () => {
  it.each([
    ['POST', '/api/calculate'],
    ['GET', '/api/templates'],
    ['GET', '/api/templates/pi-pressure-loop'],
  ])('%s %s answers a client 403 and records the refusal', async (method, path) => {
    const client = await signedIn(demo.client)
    const before = await refusalsOf(demo.client, path)
    const answer = method === 'POST' ? await client.post(path, booster) : await client.get(path)
    expect(answer.status).toBe(403)
    expect(await refusalsOf(demo.client, path)).toBe(before + 1)
  })

  it.each([['engineer'], ['checker'], ['admin']] as const)('still serves the %s', async (role) => {
    const person = await signedIn(demo[role])
    expect((await person.post('/api/calculate', smallLoop)).status).toBe(200)
    expect((await person.get('/api/templates')).status).toBe(200)
  })
})

describe('per-person limits on calculations', () => {
  it('answers a fourth calculation in flight 429 with Retry-After, and the flooder never holds up an engineer', { timeout: 180_000 }, async () => {
    const flooder = await signedIn(demo.secondEngineer)
    const engineer = await signedIn(demo.engineer)
    const order: string[] = []
    // Five heavy loops at once (each runs to the tests' 4 s time limit): three are taken, one running and two waiting.
    const flood = Array.from({ length: 5 }, (_, i) =>
      flooder.post('/api/calculate', heavyLoop()).then((answer) => {
        order.push(`heavy ${answer.status}`)
        return answer
      }),
    )
    await new Promise((resolve) => setTimeout(resolve, 500))
    const small = await engineer.post('/api/calculate', booster)
    order.push(`engineer ${small.status}`)
    const answers = await Promise.all(flood)

    // The engineer's calculation was answered before any of the flooder's heavy ones finished.
    expect(order).toContain('engineer 200')
    const firstHeavyAnswer = order.findIndex((entry) => entry.startsWith('heavy') && entry !== 'heavy 429')
    expect(firstHeavyAnswer).toBeGreaterThan(order.indexOf('engineer 200'))
    expect(answers.filter((a) => a.status === 429)).toHaveLength(2)
    // The three taken ran to the time limit (or, on a faster machine than measured, finished).
    for (const taken of answers.filter((a) => a.status !== 429)) expect([200, 422]).toContain(taken.status)
    for (const refused of answers.filter((a) => a.status === 429)) {
      expect(Number(refused.headers.get('retry-after'))).toBeGreaterThanOrEqual(1)
      expect(refused.body.message).toMatch(/3 calculations running or waiting/)
    }
  })

  it('lets a person make 240 calculations in a minute, answers the 241st 429 with the seconds to wait', { timeout: 180_000 }, async () => {
    // A new person, so no earlier test's calculations count; three at a time, within the in-flight limit.
    const admin = await signedIn(demo.admin)
    const person = await newPerson(admin, ['engineer'])
    const typist = new Client()
    expect((await typist.post('/api/auth/login', { email: person.email, password: person.password })).status).toBe(200)
    const statuses: number[] = []
    for (let i = 0; i < 240; i += 3) {
      const batch = await Promise.all([0, 1, 2].map(() => typist.post('/api/calculate', smallLoop)))
      statuses.push(...batch.map((a) => a.status))
    }
    expect(statuses.filter((s) => s === 200)).toHaveLength(240)
    const refused = await typist.post('/api/calculate', smallLoop)
    expect(refused.status).toBe(429)
    const wait = Number(refused.headers.get('retry-after'))
    expect(wait).toBeGreaterThanOrEqual(1)
    expect(wait).toBeLessThanOrEqual(60)
    expect(refused.body.message).toMatch(/240 calculations within a minute/)
    // Another person is not held by this one's limit.
    expect((await (await signedIn(demo.checker)).post('/api/calculate', smallLoop)).status).toBe(200)
  })
})

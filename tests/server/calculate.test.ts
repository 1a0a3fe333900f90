// POST /api/calculate over HTTP: the same result as the command line, refusals named by field,
// and the engine kept off the event loop (calc-contract.md, "Result" and "Bad input").
import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { Client, demo, sendUnread, signedIn } from './support/client'
import { heavyLoop } from './support/loops'

const examples = new URL('../../../shared/examples/', import.meta.url)
const booster = JSON.parse(readFileSync(new URL('booster-pressure.json', examples), 'utf8'))
const boosterExpected = JSON.parse(readFileSync(new URL('expected/booster-pressure.json', examples), 'utf8'))

function relativeError(actual: number, expected: number) {
  return Math.abs(actual - expected) / Math.max(Math.abs(expected), 1e-300)
}

describe('POST /api/calculate', () => {
  it('refuses a signed-out request with 401', async () => {
    const answer = await new Client().post('/api/calculate', booster)
    expect(answer.status).toBe(401)
  })

  it('returns the closed loop of the booster example as the independent reference computed it', async () => {
    // Reference: shared/examples/expected/booster-pressure.json (sympy exact reduction, numpy roots).
    const engineer = await signedIn(demo.engineer)
    const answer = await engineer.post('/api/calculate', booster)
    expect(answer.status).toBe(200)
    const den: number[] = answer.body.closed_loop.den
    expect(den).toHaveLength(boosterExpected.closed_loop.den.length)
    den.forEach((value, i) => expect(relativeError(value, boosterExpected.closed_loop.den[i])).toBeLessThan(1e-12))
    expect(answer.body.stability).toBe('stable')
    expect(relativeError(answer.body.margins.gain_margin_db, boosterExpected.margins.gain_margin_db)).toBeLessThan(1e-4)
  })

  it('refuses a client, who has no use for the calculator (product.md), with 403', async () => {
    const client = await signedIn(demo.client)
    const answer = await client.post('/api/calculate', booster)
    expect(answer.status).toBe(403)
    expect(answer.body.closed_loop).toBeUndefined()
  })

  it.each([
    ['an unparsable expression', { ...booster, blocks: { ...booster.blocks, P: { ...booster.blocks.P, den: 's^' } } }, 'blocks.P.den'],
    ['a negative power of s', { ...booster, blocks: { ...booster.blocks, C: { ...booster.blocks.C, num: '1/s' } } }, 'blocks.C.num'],
    ['a block the structure names but blocks lacks', { ...booster, structure: { feedback: { forward: 'X', return: null } } }, 'structure'],
    ['min above max', { ...booster, parameters: { ...booster.parameters, Kc: { value: 1, min: 2, max: 1 } } }, 'parameters.Kc'],
  ])('answers 400 naming the field for %s', async (_name, loop, field) => {
    const engineer = await signedIn(demo.engineer)
    const answer = await engineer.post('/api/calculate', loop)
    expect(answer.status).toBe(400)
    expect(answer.body.data.field.startsWith(field)).toBe(true)
    expect(answer.body.message).toContain(field)
    expect(JSON.stringify(answer.body)).not.toMatch(/at .*\.(ts|js|mjs):\d+/)
  })

  it('answers 400 for an empty body', async () => {
    const engineer = await signedIn(demo.engineer)
    const raw = await engineer.request('POST', '/api/calculate', undefined)
    expect(raw.status).toBe(400)
  })

  it('answers 400 for a file over 256 KiB', async () => {
    const engineer = await signedIn(demo.engineer)
    const padded = { ...booster, title: 'x'.repeat(300 * 1024) }
    const answer = await engineer.post('/api/calculate', padded)
    expect(answer.status).toBe(400)
    expect(answer.body.data.field).toBe('file')
  })

  it('answers 413 for a body of several MiB without reading it', async () => {
    const engineer = await signedIn(demo.engineer)
    const huge = { ...booster, title: 'x'.repeat(5 * 1024 * 1024) }
    const answer = await sendUnread('/api/calculate', { cookie: engineer.cookie, 'content-type': 'application/json' }, JSON.stringify(huge))
    expect(answer.status).toBe(413)
    expect(answer.json.data.field).toBe('file')
    expect(answer.json.message).toMatch(/above the limit of 256 KiB/)
  })
})

describe('the engine off the event loop', () => {
  it('stops a computation at its time limit and says so, while other requests are answered meanwhile', async () => {
    const engineer = await signedIn(demo.engineer)
    // The light calculation comes from another person: one person's calculations run one at a time
    // (server/utils/calc-pool.ts), so the engineer's own would wait for the heavy one.
    const colleague = await signedIn(demo.secondEngineer)
    const finished: string[] = []
    const heavy = engineer.post('/api/calculate', heavyLoop()).then((answer) => {
      finished.push('heavy')
      return answer
    })
    // Give the heavy loop a head start into its worker.
    await new Promise((resolve) => setTimeout(resolve, 300))
    const light = await colleague.post('/api/calculate', booster)
    finished.push('light')
    const session = await engineer.get('/api/_auth/session')
    finished.push('session')
    expect(light.status).toBe(200)
    expect(session.status).toBe(200)
    const stopped = await heavy
    expect(finished).toEqual(['light', 'session', 'heavy'])
    expect(stopped.status).toBe(422)
    expect(stopped.body.message).toMatch(/time limit/)
  })
})

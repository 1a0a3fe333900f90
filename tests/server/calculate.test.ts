// POST /api/calculate over HTTP: the same result as the command line, refusals named by field,
// and the engine kept off the event loop (calc-contract.md, "Result" and "Bad input").
import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { Client, demo, signedIn } from './support/client'

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

  it('gives every role the same engine: a client may compute too', async () => {
    const client = await signedIn(demo.client)
    const answer = await client.post('/api/calculate', booster)
    expect(answer.status).toBe(200)
    expect(answer.body.order).toEqual(boosterExpected.order)
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

  it('answers 400 for a body of several MiB without computing it', async () => {
    const engineer = await signedIn(demo.engineer)
    const huge = { ...booster, title: 'x'.repeat(5 * 1024 * 1024) }
    const answer = await engineer.post('/api/calculate', huge)
    expect(answer.status).toBe(400)
    expect(answer.body.data.field).toBe('file')
    expect(answer.body.message).toMatch(/above the limit of 256 KiB/)
  })
})

/** Sixteen lags in series, each time constant with a tolerance band: 65 536 corners, far past any time limit. */
function heavyLoop() {
  const lags = Array.from({ length: 16 }, (_, i) => i + 1)
  return {
    title: 'A loop too heavy to finish in time',
    parameters: {
      K: { value: 0.5 },
      ...Object.fromEntries(lags.map((i) => [`T${i}`, { value: 1 + 0.1 * i, min: 0.9 + 0.1 * i, max: 1.1 + 0.1 * i }])),
    },
    blocks: {
      K: { role: 'controller', label: 'Gain', num: 'K' },
      ...Object.fromEntries(lags.map((i) => [`G${i}`, { role: 'plant', label: `Lag ${i}`, num: '1', den: `T${i}*s + 1` }])),
    },
    structure: { feedback: { forward: { series: ['K', ...lags.map((i) => `G${i}`)] }, return: null, sign: -1 } },
  }
}

describe('the engine off the event loop', () => {
  it('stops a computation at its time limit and says so, while other requests are answered meanwhile', async () => {
    const engineer = await signedIn(demo.engineer)
    const finished: string[] = []
    const heavy = engineer.post('/api/calculate', heavyLoop()).then((answer) => {
      finished.push('heavy')
      return answer
    })
    // Give the heavy loop a head start into its worker.
    await new Promise((resolve) => setTimeout(resolve, 300))
    const light = await engineer.post('/api/calculate', booster)
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

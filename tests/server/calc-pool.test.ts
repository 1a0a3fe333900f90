// The calculation pool (server/utils/calc-pool.ts) on its own, with the built app's worker: one worker kept warm,
// another started when work waits for it, and let go once it has been idle.
import { availableParallelism } from 'node:os'
import { fileURLToPath } from 'node:url'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { smallLoop } from './support/loops'

const worker = fileURLToPath(new URL('../../.output/server/calc-worker.mjs', import.meta.url))
let pool: typeof import('../../server/utils/calc-pool')

beforeAll(async () => {
  process.env.LOOPWRIGHT_CALC_WORKER = worker
  process.env.LOOPWRIGHT_CALC_IDLE_MS = '400'
  pool = await import('../../server/utils/calc-pool')
})
afterAll(() => {
  delete process.env.LOOPWRIGHT_CALC_WORKER
  delete process.env.LOOPWRIGHT_CALC_IDLE_MS
})

describe('the calculation pool', () => {
  it('keeps one warm worker, starts a second for a second person, and lets it go when idle', async () => {
    await pool.warmCalcPool()
    expect(pool.calcWorkers()).toBe(1)
    const text = JSON.stringify(smallLoop)
    const [first, second] = await Promise.all([pool.calculateInPool(text, 'one'), pool.calculateInPool(text, 'two')])
    expect(first.ok).toBe(true)
    expect(second.ok).toBe(true)
    // Both are the engine's answer for 1/(s + 2), the closed loop of 1/(s + 1) under unity feedback (by hand), whichever worker computed it.
    for (const reply of [first, second]) expect(reply.ok && (reply.result as { closed_loop: { den: number[] } }).closed_loop.den).toEqual([1, 2])
    expect(pool.calcWorkers()).toBe(Math.min(2, availableParallelism()))
    await new Promise((resolve) => setTimeout(resolve, 1_000))
    expect(pool.calcWorkers()).toBe(1)
    // The kept worker still answers.
    const again = await pool.calculateInPool(text, 'one')
    expect(again.ok).toBe(true)
  })
})

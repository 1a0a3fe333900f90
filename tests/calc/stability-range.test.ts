import { readFileSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import { describe, expect, it } from 'vitest'
import { CalcTimeoutError } from '#shared/calc/errors'
import { hurwitzDeterminant, stableIntervals } from '#shared/calc/stability-range'

const examples = fileURLToPath(new URL('../../../shared/examples/expected/', import.meta.url))
const expected = (name: string) => JSON.parse(readFileSync(`${examples}${name}.json`, 'utf8'))

describe('stableIntervals', () => {
  it('gives [[0, 1386]] for K/(s(s+7)(s+11)) with unity feedback over [0, 5000]', () => {
    // Source: shared/examples/expected/third-order-gain-range.json (independent reference), and the Routh array
    // by hand: s^3 + 18s^2 + 77s + K, row s^1 = (1386 − K)/18, row s^0 = K.
    const ref = expected('third-order-gain-range').stability_range.intervals
    const got = stableIntervals([[1], [18], [77], [1, 0]], [0, 5000])
    expect(got).toHaveLength(ref.length)
    expect(got[0][0]).toBe(ref[0][0])
    expect(Math.abs(got[0][1] - ref[0][1])).toBeLessThan(1e-9 * ref[0][1])
  })

  it('gives 0 < K < 6 for K/(s(s+1)(s+2))', () => {
    // Source: Ogata, "Modern Control Engineering", Routh criterion applied to a unity-feedback loop (from memory):
    // s^3 + 3s^2 + 2s + K is stable for 0 < K < 6.
    const got = stableIntervals([[1], [3], [2], [1, 0]], [-10, 100])
    expect(got).toHaveLength(1)
    expect(got[0][0]).toBe(0)
    expect(got[0][1]).toBeCloseTo(6, 10)
  })

  it("puts the booster loop's upper limit of Kc at its gain margin", () => {
    // Source: shared/examples/expected/booster-pressure.json: for a loop linear in Kc the gain may rise by the
    // gain margin factor 10^(GM/20) before the loop turns unstable (common practice).
    // den = 3s(0.5s + 1)(s^2 + 1.8s + 2.25) + 2.16·Kc·(3s + 1), Kc the parameter.
    const gm = expected('booster-pressure').margins.gain_margin_db
    const got = stableIntervals([[1.5], [5.7], [8.775], [6.48, 6.75], [2.16, 0]], [0, 100])
    expect(got).toHaveLength(1)
    expect(got[0][0]).toBe(0)
    expect(Math.abs(got[0][1] - 10 ** (gm / 20))).toBeLessThan(1e-6 * got[0][1])
  })

  it('handles a parameter that is not a gain, where the order drops at a boundary: 2/(s(s+1)(Ts+1)) in T', () => {
    // Source: Routh array by hand: T s^3 + (T+1) s^2 + s + 2 needs T > 0 and (T+1) − 2T > 0, so 0 < T < 1;
    // at T = 0 the loop is second order (s^2 + s + 2, stable) and the order drops.
    const got = stableIntervals([[1, 0], [1, 1], [1], [2]], [-1, 5])
    expect(got).toHaveLength(1)
    expect(got[0][0]).toBeCloseTo(0, 12)
    expect(got[0][1]).toBeCloseTo(1, 10)
  })

  it('gives two stretches where stability is lost and regained: s^2 + (p^2 − 4)s + 1', () => {
    // Source: closed form built here: s^2 + (p^2 − 4)s + 1 is stable exactly when p^2 > 4, i.e. p < −2 or p > 2.
    const got = stableIntervals([[1], [1, 0, -4], [1]], [-5, 5])
    expect(got).toHaveLength(2)
    expect(got[0][0]).toBe(-5)
    expect(got[0][1]).toBeCloseTo(-2, 10)
    expect(got[1][0]).toBeCloseTo(2, 10)
    expect(got[1][1]).toBe(5)
  })

  it('returns no interval when the loop is never stable in the range', () => {
    // Source: Routh array by hand: s^3 + s^2 + s + K is stable only for 0 < K < 1.
    expect(stableIntervals([[1], [1], [1], [1, 0]], [2, 10])).toEqual([])
  })

  it('computes the Hurwitz determinant Δ2 = a1·a2 − a0·a3 as a polynomial in the parameter', () => {
    // Source: the definition of the Hurwitz determinants (e.g. Ogata, "Modern Control Engineering", from memory).
    // a = (1, 18, 77, K): Δ2 = 18·77 − K.
    expect(hurwitzDeterminant([[1], [18], [77], [1, 0]], 2)).toEqual([-1, 1386])
    // Fourth order: Δ3 = a1 a2 a3 − a0 a3² − a1² a4 with a = (1, 2, 3, 4, K): 24 − 16 − 4K.
    const d3 = hurwitzDeterminant([[1], [2], [3], [4], [1, 0]], 3)
    expect(d3.map((c) => Math.round(c * 1e9) / 1e9)).toEqual([-4, 8])
  })

  it('throws CalcTimeoutError once the deadline has passed', () => {
    // Source: the contract ("A computation that cannot finish within its time limit stops and says so").
    expect(() => stableIntervals([[1], [18], [77], [1, 0]], [0, 5000], { deadline: Date.now() - 1 })).toThrow(CalcTimeoutError)
  })
})

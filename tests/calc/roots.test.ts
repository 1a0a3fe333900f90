import { readFileSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import { describe, expect, it } from 'vitest'
import { polynomialRoots } from '#shared/calc/roots'
import { fromRoots } from './support/polynomials'
import type { Root } from '#shared/calc/types'

const examples = fileURLToPath(new URL('../../../shared/examples/expected/', import.meta.url))
const expected = (name: string) => JSON.parse(readFileSync(`${examples}${name}.json`, 'utf8'))

/** Largest relative distance from each expected root to the nearest computed one. */
function worstRelativeError(got: Root[], want: Array<[number, number]>): number {
  let worst = 0
  for (const [a, b] of want) {
    let best = Infinity
    for (const g of got) best = Math.min(best, Math.hypot(g.re - a, g.im - b) / Math.max(Math.hypot(a, b), 1e-300))
    worst = Math.max(worst, best)
  }
  return worst
}

describe('polynomialRoots', () => {
  // Source: shared/examples/expected/*.json, poles computed by the independent reference (numpy, Debian's python3-numpy).
  for (const name of ['booster-pressure', 'third-order-gain-range', 'type1-gain-margin']) {
    it(`poles of the ${name} example agree with the reference to 1e-8 relative`, () => {
      const ref = expected(name)
      const got = polynomialRoots(ref.closed_loop.den)
      expect(got).toHaveLength(ref.poles.length)
      ref.poles.forEach((p: { re: number; im: number }, i: number) => {
        const scale = Math.hypot(p.re, p.im)
        expect(Math.hypot(got[i].re - p.re, got[i].im - p.im) / scale).toBeLessThan(1e-8)
      })
      const zeros = polynomialRoots(ref.closed_loop.num)
      expect(zeros).toHaveLength(ref.zeros.length)
      ref.zeros.forEach((z: { re: number; im: number }, i: number) => {
        expect(Math.abs(zeros[i].re - z.re) / Math.abs(z.re)).toBeLessThan(1e-8)
      })
    })
  }

  it('returns conjugate pairs exactly conjugate, real roots with im exactly 0, sorted by re then im descending', () => {
    // Source: booster example's closed-loop denominator (shared/examples/expected/booster-pressure.json).
    const got = polynomialRoots([1, 3.8, 5.85, 8.82, 1.44])
    expect(got[0].im).toBe(0)
    expect(got[3].im).toBe(0)
    expect(got[1].re).toBe(got[2].re)
    expect(got[1].im).toBe(-got[2].im)
    expect(got[1].im).toBeGreaterThan(0)
    for (let i = 1; i < got.length; i++) expect(got[i].re).toBeGreaterThanOrEqual(got[i - 1].re)
  })

  it('finds the repeated root of (s+1)^4 to 1e-6', () => {
    // Source: closed form, (s + 1)^4 = s^4 + 4s^3 + 6s^2 + 4s + 1 (binomial theorem).
    const got = polynomialRoots([1, 4, 6, 4, 1])
    expect(got).toHaveLength(4)
    for (const r of got) {
      expect(Math.abs(r.re + 1)).toBeLessThan(1e-6)
      expect(r.im).toBe(0)
    }
  })

  it('finds a repeated real root of (s+0.3)^3 (s+2) and a repeated complex pair of (s^2+1)^2', () => {
    // Source: closed form, coefficients built here from the known roots.
    const a = polynomialRoots(fromRoots([[-0.3, 0], [-0.3, 0], [-0.3, 0], [-2, 0]]))
    expect(worstRelativeError(a, [[-0.3, 0], [-2, 0]])).toBeLessThan(1e-6)
    expect(a.filter((r) => Math.abs(r.re + 0.3) < 1e-6)).toHaveLength(3)
    const b = polynomialRoots([1, 0, 2, 0, 1])
    expect(b).toHaveLength(4)
    for (const r of b) {
      expect(Math.abs(r.re)).toBeLessThan(1e-6)
      expect(Math.abs(Math.abs(r.im) - 1)).toBeLessThan(1e-6)
    }
    expect(b[0].im).toBeGreaterThan(0)
    expect(b[1].im).toBeGreaterThan(0)
  })

  it('puts the roots of s^3 + 2s^2 + 4s + 8 = (s + 2)(s^2 + 4) at −2 and ±2j', () => {
    // Source: closed form factorization.
    const got = polynomialRoots([1, 2, 4, 8])
    expect(worstRelativeError(got, [[-2, 0], [0, 2], [0, -2]])).toBeLessThan(1e-12)
    expect(Math.abs(got[1].re)).toBeLessThan(1e-14)
  })

  it('gives ζ and ωn of the standard second-order pair s^2 + 2ζωn s + ωn^2', () => {
    // Source: the standard second-order form, e.g. Ogata, "Modern Control Engineering", ch. 5 (from memory).
    const zeta = 0.6
    const wn = 1.5
    const got = polynomialRoots([1, 2 * zeta * wn, wn * wn])
    for (const r of got) {
      expect(r.damping).toBeCloseTo(zeta, 12)
      expect(r.natural_frequency_rad_s).toBeCloseTo(wn, 12)
    }
    const real = polynomialRoots([2, 6])[0]
    expect(real).toEqual({ re: -3, im: 0, damping: 1, natural_frequency_rad_s: 3 })
    expect(polynomialRoots([1, -4])[0].damping).toBe(-1)
  })

  it('trims leading zeros and returns exact roots at the origin for trailing zeros', () => {
    // Source: closed form, s (s + 1)(s + 2) = s^3 + 3s^2 + 2s.
    const got = polynomialRoots([0, 0, 1, 3, 2, 0])
    expect(got.map((r) => r.re)).toEqual([-2, -1, 0])
    expect(got[2]).toEqual({ re: 0, im: 0, damping: null, natural_frequency_rad_s: 0 })
    expect(polynomialRoots([5])).toEqual([])
    expect(() => polynomialRoots([0, 0])).toThrow()
    expect(() => polynomialRoots([1, Number.NaN])).toThrow()
  })

  for (const degree of [20, 30, 40]) {
    it(`finds all roots of a well-conditioned degree-${degree} polynomial built from known roots`, () => {
      // Source: closed form; conjugate pairs with moduli in geometric progression (ratio 1.5) and
      // angles spread over the left half-plane, so each root is well conditioned (numpy's roots,
      // Debian's python3-numpy, gets these to 2e-11 at degree 40); the polynomial built here.
      const want: Array<[number, number]> = []
      for (let k = 0; k < degree / 2; k++) {
        const radius = 1.5 ** (k - degree / 4)
        const angle = Math.PI * (0.55 + 0.4 * ((k * 0.37) % 1))
        want.push([radius * Math.cos(angle), radius * Math.sin(angle)], [radius * Math.cos(angle), -radius * Math.sin(angle)])
      }
      const got = polynomialRoots(fromRoots(want))
      expect(got).toHaveLength(degree)
      expect(worstRelativeError(got, want)).toBeLessThan(1e-8)
    })
  }

  it('finds roots spread over six decades (Newton-polygon starting points)', () => {
    // Source: closed form, roots −10^(k/2) for k = −6 … 6, polynomial built here.
    const want: Array<[number, number]> = []
    for (let k = -6; k <= 6; k++) want.push([-(10 ** (k / 2)), 0])
    const got = polynomialRoots(fromRoots(want))
    expect(got).toHaveLength(13)
    expect(worstRelativeError(got, want)).toBeLessThan(1e-8)
    for (const r of got) expect(r.im).toBe(0)
  })
})

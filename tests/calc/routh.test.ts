import { describe, expect, it } from 'vitest'
import { polynomialRoots } from '#shared/calc/roots'
import { fromRoots } from './support/polynomials'
import { routhArray } from '#shared/calc/routh'
import { stabilityVerdict } from '#shared/calc/stability'

const verdict = (den: number[]) => stabilityVerdict(den, routhArray(den), polynomialRoots(den))

describe('routhArray', () => {
  it('counts two right-half-plane roots of s^3 + 10s^2 + 31s + 1030', () => {
    // Source: Nise, "Control Systems Engineering", ch. 6, first Routh table example (from memory):
    // first column 1, 10, −72, 1030 (the book divides row s^2 by 10), two sign changes, two RHP poles.
    const r = routhArray([1, 10, 31, 1030])
    expect(r.rows).toEqual([[1, 31], [10, 1030], [-72], [1030]])
    expect(r.sign_changes).toBe(2)
    expect(r.special_case).toBe('none')
    expect(verdict([1, 10, 31, 1030])).toBe('unstable')
  })

  it('counts two right-half-plane roots of s^4 + 2s^3 + 3s^2 + 4s + 5', () => {
    // Source: Ogata, "Modern Control Engineering", Routh's stability criterion section (from memory):
    // first column 1, 2, 1, −6, 5.
    const r = routhArray([1, 2, 3, 4, 5])
    expect(r.first_column).toEqual([1, 2, 1, -6, 5])
    expect(r.sign_changes).toBe(2)
    expect(polynomialRoots([1, 2, 3, 4, 5]).filter((p) => p.re > 0)).toHaveLength(2)
  })

  it('replaces a zero first element by ε and reads two sign changes in the limit', () => {
    // Source: Nise, "Control Systems Engineering", ch. 6, zero-in-the-first-column example (from memory):
    // s^5 + 2s^4 + 3s^3 + 6s^2 + 5s + 3, row s^3 is (0, 7/2), ε taken; first column 1, 2, ε, (6ε − 7)/ε, …: two RHP poles.
    const r = routhArray([1, 2, 3, 6, 5, 3])
    expect(r.special_case).toBe('zero_first_element')
    expect(r.epsilon_rows).toEqual([2])
    expect(r.rows[2][0]).toBeGreaterThan(0)
    expect(r.rows[2][0]).toBeLessThan(1e-8)
    expect(r.rows[2][1]).toBeCloseTo(3.5, 12)
    expect(r.first_column[3]).toBeLessThan(0)
    expect(r.first_column[4]).toBeGreaterThan(0)
    expect(r.first_column[5]).toBeCloseTo(3, 12)
    expect(r.sign_changes).toBe(2)
    expect(verdict([1, 2, 3, 6, 5, 3])).toBe('unstable')
  })

  it('replaces a row of zeros by the derivative of the auxiliary polynomial: s^5 + 7s^4 + 6s^3 + 42s^2 + 8s + 56', () => {
    // Source: Nise, "Control Systems Engineering", ch. 6, entire-row-of-zeros example (from memory):
    // row s^3 vanishes, P(s) = s^4 + 6s^2 + 8 (the book's row s^4 divided by 7), dP/ds = 4s^3 + 12s;
    // no sign change; the roots of P are ±j√2 and ±j2, on the imaginary axis.
    const den = [1, 7, 6, 42, 8, 56]
    const r = routhArray(den)
    expect(r.special_case).toBe('zero_row')
    expect(r.auxiliary_rows).toEqual([2])
    expect(r.rows[2]).toEqual([28, 84]) // 7 × (4, 12): this array keeps row s^4 undivided
    expect(r.sign_changes).toBe(0)
    expect(verdict(den)).toBe('marginal')
    const onAxis = polynomialRoots(den).filter((p) => p.re === 0 || Math.abs(p.re) < 1e-9)
    expect(onAxis.map((p) => Math.abs(p.im)).sort()).toEqual([
      expect.closeTo(Math.SQRT2, 10),
      expect.closeTo(Math.SQRT2, 10),
      expect.closeTo(2, 10),
      expect.closeTo(2, 10),
    ])
  })

  it('judges s^3 + 2s^2 + 4s + 8 = (s + 2)(s^2 + 4) marginal from its row of zeros, not from rounding in Re', () => {
    // Source: closed form factorization; the row-of-zeros rule as in Ogata, "Modern Control Engineering" (from memory).
    const r = routhArray([1, 2, 4, 8])
    expect(r.rows).toEqual([[1, 4], [2, 8], [4], [8]])
    expect(r.special_case).toBe('zero_row')
    expect(verdict([1, 2, 4, 8])).toBe('marginal')
    // The same verdict whatever the rounding of Re of ±2j in the poles handed over.
    const poles = polynomialRoots([1, 2, 4, 8]).map((p) => (p.im !== 0 ? { ...p, re: 1e-16 } : p))
    expect(stabilityVerdict([1, 2, 4, 8], r, poles)).toBe('marginal')
  })

  it('reads the third-order loop s^3 + 18s^2 + 77s + K at, below and above K = 1386', () => {
    // Source: Routh criterion applied by hand (e.g. Nise ch. 6 style gain-range example, from memory):
    // row s^1 = (18·77 − K)/18, so the loop is stable for 0 < K < 1386 and marginal at 1386.
    expect(routhArray([1, 18, 77, 500]).rows[2][0]).toBeCloseTo((1386 - 500) / 18, 12)
    expect(verdict([1, 18, 77, 500])).toBe('stable')
    expect(verdict([1, 18, 77, 1386])).toBe('marginal')
    expect(verdict([1, 18, 77, 1400])).toBe('unstable')
    expect(routhArray([1, 18, 77, 1400]).sign_changes).toBe(2)
  })

  it('gives a root at the origin as marginal', () => {
    // Source: common practice (a pure integrator in the closed loop has a pole at s = 0).
    expect(verdict([1, 3, 2, 0])).toBe('marginal')
  })

  it('agrees with the examples: no sign change, no special case, stable', () => {
    // Source: shared/examples/expected/*.json (independent reference).
    for (const den of [[1, 3.8, 5.85, 8.82, 1.44], [1, 18, 77, 500], [1, 3, 2, 1]]) {
      const r = routhArray(den)
      expect(r.sign_changes).toBe(0)
      expect(r.special_case).toBe('none')
      expect(verdict(den)).toBe('stable')
    }
  })

  it('counts as many sign changes as right-half-plane roots on 300 polynomials built from known roots', () => {
    // Source: the Routh–Hurwitz theorem; roots chosen here (so the count is known without any root finder).
    let seed = 12345
    const random = () => ((seed = (seed * 1103515245 + 12345) % 2 ** 31) / 2 ** 31)
    for (let trial = 0; trial < 300; trial++) {
      const roots: Array<[number, number]> = []
      let rhp = 0
      const degree = 1 + Math.floor(random() * 9)
      while (roots.length < degree) {
        const re = (random() < 0.3 ? 1 : -1) * (0.1 + 5 * random())
        if (roots.length + 2 <= degree && random() < 0.5) {
          const im = 0.1 + 5 * random()
          roots.push([re, im], [re, -im])
          if (re > 0) rhp += 2
        } else {
          roots.push([re, 0])
          if (re > 0) rhp += 1
        }
      }
      const den = fromRoots(roots)
      expect(routhArray(den).sign_changes).toBe(rhp)
      expect(verdict(den)).toBe(rhp > 0 ? 'unstable' : 'stable')
    }
  })
})

import { checkDeadline, type DeadlineOption } from './deadline'
import { findRoots, toRoot, trimLeadingZeros } from './roots'
import { routhArray } from './routh'
import { stabilityVerdict } from './stability'

/**
 * Stable stretches of one parameter p over `search`.
 *
 * `denInParameter[i]` holds the coefficients (highest power of p first) of
 * the polynomial in p that multiplies s^(n−i) in the closed-loop
 * denominator. A root can cross into the right half-plane only through
 * s = 0 (the constant coefficient vanishes), through infinity (the leading
 * coefficient vanishes) or as a pair ±jω (the Hurwitz determinant Δ(n−1)
 * vanishes; Gantmacher, "The Theory of Matrices", vol. 2, ch. XV, and
 * Orlando's formula), so the real roots of those three polynomials in p are
 * the only candidate boundaries. Δ(n−1) is computed as a polynomial in p by
 * fraction-free Bareiss elimination (Bareiss, Math. Comp. 22, 1968), whose
 * divisions are exact. Each stretch between candidates is then judged by the
 * verdict at its midpoint, and neighbouring stable stretches are merged.
 *
 * Convention: an interval is reported with its boundary values, closed; at a
 * boundary itself the loop is usually marginal (for K/(s(s+7)(s+11)) with
 * unity feedback over [0, 5000] the result is [[0, 1386]], and the loop is
 * marginal at K = 0 and at K = 1386).
 */
export function stableIntervals(denInParameter: number[][], search: [number, number], options: DeadlineOption = {}): Array<[number, number]> {
  const started = Date.now()
  checkDeadline(options, 'the stability range', started)
  const [lo, hi] = search[0] <= search[1] ? search : [search[1], search[0]]
  const coefficients = denInParameter.map((c) => trimPolynomial(c))
  while (coefficients.length > 1 && isZeroPolynomial(coefficients[0]!)) coefficients.shift()
  const n = coefficients.length - 1

  const candidates = [lo, hi]
  const addRoots = (p: number[]) => {
    if (isZeroPolynomial(p) || p.length < 2) return
    for (const r of findRoots(p)) {
      if (Math.abs(r.im) <= 1e-7 * Math.max(1, Math.abs(r.re)) && r.re > lo && r.re < hi) candidates.push(r.re)
    }
  }
  addRoots(coefficients[0]!)
  addRoots(coefficients[n]!)
  if (n >= 2) addRoots(hurwitzDeterminant(coefficients, n - 1, options, started))
  candidates.sort((a, b) => a - b)
  const points = candidates.filter((c, i) => i === 0 || c - candidates[i - 1]! > 1e-12 * Math.max(1, Math.abs(c)))

  const intervals: Array<[number, number]> = []
  for (let i = 0; i + 1 < points.length; i++) {
    checkDeadline(options, 'the stability range', started)
    const mid = 0.5 * (points[i]! + points[i + 1]!)
    if (!isStableAt(coefficients, mid)) continue
    const last = intervals[intervals.length - 1]
    if (last && last[1] === points[i]) last[1] = points[i + 1]!
    else intervals.push([points[i]!, points[i + 1]!])
  }
  if (lo === hi && isStableAt(coefficients, lo)) intervals.push([lo, hi])
  return intervals
}

function isStableAt(coefficients: number[][], p: number): boolean {
  const den = coefficients.map((c) => horner(c, p))
  if (den.every((c) => c === 0)) return false
  const d = trimLeadingZeros(den)
  return stabilityVerdict(d, routhArray(d), findRoots(d).map(toRoot)) === 'stable'
}

/** Δ(order) of the Hurwitz matrix H[i][j] = a_{2j−i+1} (0-based), as a polynomial in p. */
export function hurwitzDeterminant(a: number[][], order: number, options: DeadlineOption = {}, started = Date.now()): number[] {
  const n = a.length - 1
  const entry = (k: number) => (k >= 0 && k <= n ? a[k]! : [0])
  const m: number[][][] = []
  for (let i = 0; i < order; i++) {
    const row: number[][] = []
    for (let j = 0; j < order; j++) row.push(entry(2 * j - i + 1).slice())
    m.push(row)
  }
  let sign = 1
  let previous: number[] = [1]
  for (let k = 0; k < order - 1; k++) {
    checkDeadline(options, 'the stability range', started)
    if (isZeroPolynomial(m[k]![k]!)) {
      const swap = m.findIndex((row, r) => r > k && !isZeroPolynomial(row[k]!))
      if (swap < 0) return [0]
      ;[m[k], m[swap]] = [m[swap]!, m[k]!]
      sign = -sign
    }
    for (let i = k + 1; i < order; i++) {
      for (let j = k + 1; j < order; j++) {
        const left = multiply(m[k]![k]!, m[i]![j]!)
        const right = multiply(m[i]![k]!, m[k]![j]!)
        const scale = Math.max(norm(left), norm(right))
        const difference = subtract(left, right)
        m[i]![j] = norm(difference) <= 1e-12 * scale ? [0] : divideExactly(trimRelative(difference, 1e-12 * scale), previous)
      }
      m[i]![k] = [0]
    }
    previous = m[k]![k]!
  }
  const det = m[order - 1]![order - 1]!
  return sign === 1 ? det : det.map((c) => -c)
}

function trimPolynomial(p: readonly number[]): number[] {
  let first = 0
  while (first < p.length - 1 && p[first] === 0) first++
  return p.length === 0 ? [0] : p.slice(first)
}

/** Leading coefficients that are rounding residue (below `tolerance`) dropped. */
function trimRelative(p: readonly number[], tolerance: number): number[] {
  let first = 0
  while (first < p.length - 1 && Math.abs(p[first]!) <= tolerance) first++
  return p.slice(first)
}

function isZeroPolynomial(p: readonly number[]): boolean {
  return p.every((c) => c === 0)
}

function norm(p: readonly number[]): number {
  return p.reduce((s, c) => s + Math.abs(c), 0)
}

function horner(p: readonly number[], x: number): number {
  let v = 0
  for (const c of p) v = v * x + c
  return v
}

function multiply(a: readonly number[], b: readonly number[]): number[] {
  const out = new Array(a.length + b.length - 1).fill(0)
  for (let i = 0; i < a.length; i++) for (let j = 0; j < b.length; j++) out[i + j] += a[i]! * b[j]!
  return trimPolynomial(out)
}

function subtract(a: readonly number[], b: readonly number[]): number[] {
  const size = Math.max(a.length, b.length)
  const out = new Array(size).fill(0)
  a.forEach((c, i) => (out[size - a.length + i] += c))
  b.forEach((c, i) => (out[size - b.length + i] -= c))
  return trimPolynomial(out)
}

/** Quotient of a division that is exact in exact arithmetic (Bareiss); the rounding remainder is dropped. */
function divideExactly(numerator: readonly number[], divisor: readonly number[]): number[] {
  const d = trimPolynomial(divisor)
  const r = trimPolynomial(numerator).slice()
  if (r.length < d.length) return [0]
  const q = new Array(r.length - d.length + 1).fill(0)
  for (let i = 0; i < q.length; i++) {
    q[i] = r[i]! / d[0]!
    for (let j = 0; j < d.length; j++) r[i + j]! -= q[i] * d[j]!
  }
  return trimPolynomial(q)
}

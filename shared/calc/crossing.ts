/**
 * Zeros of a real function of one variable on a bracket, and the polishing of
 * an approximate crossover frequency on L(jω) itself.
 *
 * Brent's method (R. P. Brent, "Algorithms for Minimization without
 * Derivatives", 1973, ch. 4, the algorithm `zero`): inverse quadratic
 * interpolation and secant steps, each accepted only while it stays inside the
 * shrinking bracket and shrinks it fast enough, bisection otherwise; so it
 * never leaves the bracket and converges superlinearly on a smooth function.
 * Written here because neither mathjs nor any well-known package of the npm
 * registry offers a scalar zero-finder on a bracket (searched the registry's
 * package list for one: the few hits are small single-author ports of bisection).
 */

const EPS = Number.EPSILON

function sameSign(a: number, b: number): boolean {
  return (a > 0 && b > 0) || (a < 0 && b < 0)
}

/**
 * A zero of f in [a, b], where f(a) = fa and f(b) = fb have opposite signs
 * (or one is zero), to within `tolerance` (absolute) plus 4·ε relative.
 */
export function brentZero(f: (x: number) => number, a: number, b: number, fa: number, fb: number, tolerance = 0): number {
  if (fa === 0) return a
  if (fb === 0) return b
  let c = a
  let fc = fa
  let d = b - a
  let e = d
  for (let i = 0; i < 200; i++) {
    if (Math.abs(fc) < Math.abs(fb)) {
      a = b
      b = c
      c = a
      fa = fb
      fb = fc
      fc = fa
    }
    const tol = 2 * EPS * Math.abs(b) + 0.5 * tolerance
    const m = 0.5 * (c - b)
    if (Math.abs(m) <= tol || fb === 0) return b
    if (Math.abs(e) < tol || Math.abs(fa) <= Math.abs(fb)) {
      d = m
      e = m
    } else {
      const s = fb / fa
      let p: number
      let q: number
      if (a === c) {
        p = 2 * m * s
        q = 1 - s
      } else {
        const qa = fa / fc
        const r = fb / fc
        p = s * (2 * m * qa * (qa - r) - (b - a) * (r - 1))
        q = (qa - 1) * (r - 1) * (s - 1)
      }
      if (p > 0) q = -q
      else p = -p
      if (2 * p < Math.min(3 * m * q - Math.abs(tol * q), Math.abs(e * q))) {
        e = d
        d = p / q
      } else {
        d = m
        e = m
      }
    }
    a = b
    fa = fb
    b += Math.abs(d) > tol ? d : m > 0 ? tol : -tol
    fb = f(b)
    if (!Number.isFinite(fb)) return a
    if (sameSign(fb, fc)) {
      c = a
      fc = fa
      d = b - a
      e = d
    }
  }
  return b
}

/** First relative half-width of the bracket searched around a candidate, and its growth per step. */
const FIRST_WIDTH = 1e-10
const GROWTH = 16

/**
 * The crossing of f = 0 nearest to the candidate frequency w, inside
 * (lower, upper): a bracket grows geometrically around w until f changes sign
 * across it, then Brent's method polishes the zero to rounding level. The
 * limits (halfway to the neighbouring candidates) keep it from jumping to
 * another crossing. Null when f keeps its sign throughout.
 */
export function polishCrossing(f: (w: number) => number, w: number, lower: number, upper: number): number | null {
  const fw = f(w)
  if (fw === 0) return w
  if (!Number.isFinite(fw)) return null
  for (let width = FIRST_WIDTH; ; width *= GROWTH) {
    const left = Math.max(w / (1 + width), lower)
    const right = Math.min(w * (1 + width), upper)
    const fl = f(left)
    if (Number.isFinite(fl) && !sameSign(fl, fw)) return brentZero(f, left, w, fl, fw)
    const fr = f(right)
    if (Number.isFinite(fr) && !sameSign(fr, fw)) return brentZero(f, w, right, fw, fr)
    if (left <= lower && right >= upper) return null
  }
}

/**
 * Every candidate polished by polishCrossing, each limited to halfway (in
 * log ω) to its neighbours; a candidate with no sign change nearby is kept
 * only where |f| ≤ `touching` (a crossing that touches zero without passing
 * it), otherwise dropped as no crossing. Sorted, duplicates merged.
 */
export function polishCrossings(f: (w: number) => number, candidates: readonly number[], touching: number): number[] {
  const sorted = candidates.filter((w) => w > 0 && Number.isFinite(w)).sort((a, b) => a - b)
  const out: number[] = []
  sorted.forEach((w, i) => {
    const before = sorted[i - 1]
    const after = sorted[i + 1]
    const lower = before === undefined ? w / 4 : Math.sqrt(before * w)
    const upper = after === undefined ? w * 4 : Math.sqrt(w * after)
    let polished = polishCrossing(f, w, lower, upper)
    if (polished === null && Math.abs(f(w)) <= touching) polished = w
    if (polished !== null && !out.some((x) => Math.abs(x - (polished as number)) <= 1e-9 * x)) out.push(polished)
  })
  return out.sort((a, b) => a - b)
}

/** A zero of f between lo and hi where f changes sign across them, else null. */
export function bracketedZero(f: (x: number) => number, lo: number, hi: number): number | null {
  const flo = f(lo)
  const fhi = f(hi)
  if (!(Math.sign(flo) * Math.sign(fhi) <= 0) || !Number.isFinite(flo) || !Number.isFinite(fhi)) return null
  return brentZero(f, lo, hi, flo, fhi)
}

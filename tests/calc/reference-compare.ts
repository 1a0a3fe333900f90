/**
 * Comparisons of engine values with the independent reference, each returning
 * a sentence describing the disagreement, or null. The tolerances are the
 * contract's (calc-contract.md, "Accuracy the engine guarantees").
 */

export const TOLERANCE = {
  coefficient: 1e-12,
  root: 1e-8,
  repeatedRoot: 1e-6,
  margin: 1e-4,
  step: 5e-3,
} as const

/** Relative closeness, with an explicit scale for quantities whose own size can be near zero. */
export function relativeGap(value: number, reference: number, scale = Math.abs(reference)): number {
  if (value === reference) return 0
  return Math.abs(value - reference) / Math.max(scale, Number.MIN_VALUE)
}

/**
 * Coefficients, listed from the highest power down. Norm: coefficient i may
 * differ by 1e-12 × m_i, where m_i is the same coefficient of the reduction
 * done on coefficient magnitudes with every subtraction turned into an
 * addition (the reference's `closed_loop_scale`). Where no terms cancel,
 * m_i = |c_i| and this is plain relative error; where terms cancel, m_i is the
 * size of the terms that cancelled, the quantity floating-point rounding is
 * proportional to (the standard bound for a sum: |fl(Σx) − Σx| ≤ n·u·Σ|x|,
 * Higham, "Accuracy and Stability of Numerical Algorithms", ch. 4; from memory).
 * Without `scale` the norm is plain relative, with an absolute floor of
 * 1e-300 only to avoid dividing by zero.
 */
export function coefficientProblem(what: string, value: number[], reference: number[], scale?: number[], tol: number = TOLERANCE.coefficient): string | null {
  if (!Array.isArray(value)) return `${what}: engine gave ${JSON.stringify(value)}`
  if (value.length !== reference.length) return `${what}: engine has ${value.length} coefficients [${value.join(', ')}], reference ${reference.length} [${reference.join(', ')}]`
  for (let i = 0; i < value.length; i++) {
    const s = Math.max(Math.abs(reference[i]!), scale?.[i] ?? 0, 1e-300)
    const gap = relativeGap(value[i]!, reference[i]!, s)
    if (!(gap <= tol)) return `${what}[${i}]: engine ${value[i]}, reference ${reference[i]} (gap ${gap.toExponential(2)} of scale ${s.toExponential(3)}, tolerance ${tol})`
  }
  return null
}

interface PlainRoot {
  re: number
  im: number
}

/**
 * Roots as multisets: each reference root is matched to the nearest unmatched
 * engine root, and the distance must be within 1e-8 relative (1e-6 for a root
 * of multiplicity above one), relative to max(|root|, 1e-3) so a root at the
 * origin is held to 1e-11 absolute rather than to zero.
 */
export function rootsProblem(what: string, value: PlainRoot[], reference: Array<PlainRoot & { multiplicity: number }>): string | null {
  if (!Array.isArray(value)) return `${what}: engine gave ${JSON.stringify(value)}`
  if (value.length !== reference.length) return `${what}: engine has ${value.length} roots, reference ${reference.length}`
  const free = value.map((r) => ({ ...r }))
  const used = new Array<boolean>(free.length).fill(false)
  // Match the simple roots first: they are the sharpest.
  const order = [...reference].sort((a, b) => a.multiplicity - b.multiplicity)
  for (const r of order) {
    let best = -1
    let dist = Infinity
    for (let j = 0; j < free.length; j++) {
      if (used[j]) continue
      const d = Math.hypot(free[j]!.re - r.re, free[j]!.im - r.im)
      if (d < dist) {
        dist = d
        best = j
      }
    }
    used[best] = true
    const tol = r.multiplicity > 1 ? TOLERANCE.repeatedRoot : TOLERANCE.root
    const gap = dist / Math.max(Math.hypot(r.re, r.im), 1e-3)
    if (!(gap <= tol))
      return `${what}: reference root ${r.re} ${r.im >= 0 ? '+' : '-'} ${Math.abs(r.im)}j (multiplicity ${r.multiplicity}) nearest engine root ${free[best]!.re} ${free[best]!.im >= 0 ? '+' : '-'} ${Math.abs(free[best]!.im)}j, gap ${gap.toExponential(2)} > ${tol}`
  }
  return null
}

/** A scalar, or both null. */
export function scalarProblem(what: string, value: number | null | undefined, reference: number | null, tol: number, floor = 0): string | null {
  if (reference === null) return value === null || value === undefined ? null : `${what}: engine ${value}, reference null`
  if (value === null || value === undefined) return `${what}: engine null, reference ${reference}`
  const gap = Math.abs(value - reference)
  if (!(gap <= tol * Math.abs(reference) + floor)) return `${what}: engine ${value}, reference ${reference} (relative gap ${(gap / Math.abs(reference)).toExponential(2)} > ${tol})`
  return null
}

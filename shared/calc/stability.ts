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
 * Repeated poles on the axis (e.g. (s² + 1)²) are 'marginal' by the
 * contract's definition of location, although their response grows as t·sin t.
 */
export function stabilityVerdict(den: number[], routh: RouthResult, poles: Root[]): Stability {
  void den
  const clearlyRight = poles.some((p) => p.re > CLEARLY_OFF_AXIS * p.natural_frequency_rad_s)
  const allClearlyLeft = poles.every((p) => p.re < -CLEARLY_OFF_AXIS * p.natural_frequency_rad_s)
  if (routh.sign_changes > 0) return allClearlyLeft ? 'stable' : 'unstable'
  if (clearlyRight) return 'unstable'
  if (routh.special_case !== 'none') return 'marginal'
  return 'stable'
}

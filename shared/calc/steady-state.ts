import { type Rational, ONE, isZero, rationalToNumber } from './rational'

/**
 * DC gain and steady-state error of T(s) = N/D for a unit step and a unit
 * ramp, from E(s) = 1 − T(s) = (D − N)/D and the final-value theorem
 * (any control text, e.g. Ogata, "Modern Control Engineering", ch. 5, from memory):
 *   step: e = lim s·E(s)/s = 1 − T(0)
 *   ramp: e = lim s·E(s)/s² = lim (D − N)/(s·D) = (D − N)'(0)/D(0) when (D − N)(0) = 0, unbounded otherwise.
 * Exact coefficients, lowest power first, so "(D − N)(0) = 0" is decided exactly.
 */
export function dcGain(num: readonly Rational[], den: readonly Rational[]): number | null {
  const d0 = den[0]
  if (d0 === undefined || isZero(d0)) return null
  return rationalToNumber((num[0] ?? ONE.sub(ONE)).div(d0))
}

export function steadyStateErrors(num: readonly Rational[], den: readonly Rational[]): { step: number | null; ramp: number | null } {
  const zero = ONE.sub(ONE)
  const d0 = den[0] ?? zero
  if (isZero(d0)) return { step: null, ramp: null }
  const e0 = d0.sub(num[0] ?? zero)
  const step = rationalToNumber(e0.div(d0))
  if (!isZero(e0)) return { step, ramp: null }
  const e1 = (den[1] ?? zero).sub(num[1] ?? zero)
  return { step, ramp: rationalToNumber(e1.div(d0)) }
}

/** The same from floating-point coefficients (tolerance corners), with "zero" meaning below 1e-12 of the coefficients' size. */
export function steadyStateErrorsApprox(num: readonly number[], den: readonly number[]): { step: number | null; ramp: number | null } {
  const d0 = den[0] ?? 0
  const scale = Math.max(...den.map(Math.abs), ...num.map(Math.abs))
  if (Math.abs(d0) <= 1e-12 * scale) return { step: null, ramp: null }
  const e0 = d0 - (num[0] ?? 0)
  const step = e0 / d0
  if (Math.abs(e0) > 1e-12 * scale) return { step, ramp: null }
  return { step: 0, ramp: ((den[1] ?? 0) - (num[1] ?? 0)) / d0 }
}

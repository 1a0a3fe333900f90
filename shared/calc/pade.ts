import { Multinomial } from './multinomial'
import type { TransferFunction } from './polynomial'
import { type Rational, ONE, Rational as Fraction } from './rational'

/**
 * Padé approximant [n/n] of the dead time e^(−sθ):
 *   e^(−x) ≈ P(−x)/P(x),  P(x) = Σ_{k=0..n} (2n−k)! n! / ((2n)! k! (n−k)!) x^k
 * (G. A. Baker and P. Graves-Morris, "Padé Approximants", the exponential's
 * table; the same formula as in the standard control texts, from memory).
 */
export function padeCoefficients(order: number): Rational[] {
  const factorial = (k: number): bigint => (k <= 1 ? 1n : BigInt(k) * factorial(k - 1))
  const out: Rational[] = []
  for (let k = 0; k <= order; k++) {
    out.push(new Fraction(factorial(2 * order - k) * factorial(order), factorial(2 * order) * factorial(k) * factorial(order - k)))
  }
  return out
}

/**
 * The approximant with θ = a/b symbolic: both polynomials multiplied through
 * by bⁿ so their coefficients stay multinomials:
 *   num = Σ c_k (−1)^k a^k b^(n−k) s^k,  den = Σ c_k a^k b^(n−k) s^k.
 */
export function padeDelay(thetaNum: Multinomial, thetaDen: Multinomial, order: number): TransferFunction {
  const c = padeCoefficients(order)
  const variables = thetaNum.variables
  const num: Multinomial[] = []
  const den: Multinomial[] = []
  let aPower = Multinomial.constant(variables, ONE)
  for (let k = 0; k <= order; k++) {
    const coefficient = aPower.multiply(thetaDen.power(order - k)).scale(c[k]!)
    den.push(coefficient)
    num.push(k % 2 === 0 ? coefficient : coefficient.negate())
    aPower = aPower.multiply(thetaNum)
  }
  return { num, den }
}

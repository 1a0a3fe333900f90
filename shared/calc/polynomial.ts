import type { Deadline } from './errors'
import { checkTermProducts } from './limits'
import { Multinomial } from './multinomial'
import { type Rational, ONE, isZero } from './rational'

/**
 * Polynomials in s whose coefficients are multinomials in the parameters.
 * Held lowest power first (index = power of s), trimmed so the last entry is
 * never the zero multinomial; the zero polynomial is the empty list. Results
 * list coefficients highest power first, which `descending` gives.
 */
export type Polynomial = readonly Multinomial[]

/** A transfer function as the reduction gives it: no common factor is ever cancelled. */
export interface TransferFunction {
  num: Polynomial
  den: Polynomial
}

export function trim(p: Multinomial[]): Polynomial {
  let n = p.length
  while (n > 0 && p[n - 1]!.isZero) n--
  return n === p.length ? p : p.slice(0, n)
}

export function constantPolynomial(c: Multinomial): Polynomial {
  return c.isZero ? [] : [c]
}

export function degree(p: Polynomial): number {
  return p.length - 1
}

export function isOnePolynomial(p: Polynomial): boolean {
  return p.length === 1 && p[0]!.isOne
}

export function add(a: Polynomial, b: Polynomial): Polynomial {
  const out: Multinomial[] = []
  for (let k = 0; k < Math.max(a.length, b.length); k++) {
    out.push(k >= a.length ? b[k]! : k >= b.length ? a[k]! : a[k]!.add(b[k]!))
  }
  return trim(out)
}

export function negate(p: Polynomial): Polynomial {
  return p.map((c) => c.negate())
}

export function addSigned(a: Polynomial, b: Polynomial, sign: 1 | -1): Polynomial {
  return add(a, sign === 1 ? b : negate(b))
}

export function multiply(a: Polynomial, b: Polynomial, deadline?: Deadline): Polynomial {
  if (a.length === 0 || b.length === 0) return []
  if (isOnePolynomial(a)) return b
  if (isOnePolynomial(b)) return a
  checkTermProducts(termCount(a), termCount(b))
  const variables = a[0]!.variables
  const out: Multinomial[] = Array.from({ length: a.length + b.length - 1 }, () => new Multinomial(variables))
  for (let i = 0; i < a.length; i++) {
    if (a[i]!.isZero) continue
    for (let j = 0; j < b.length; j++) {
      if (b[j]!.isZero) continue
      out[i + j] = out[i + j]!.add(a[i]!.multiply(b[j]!, deadline))
    }
  }
  return trim(out)
}

export function multiplyAll(factors: readonly Polynomial[], variables: number, deadline?: Deadline): Polynomial {
  return factors.reduce((acc, f) => multiply(acc, f, deadline), [Multinomial.constant(variables, ONE)] as Polynomial)
}

export function scale(p: Polynomial, factor: Multinomial, deadline?: Deadline): Polynomial {
  if (factor.isOne) return p
  if (factor.constantValue === null) checkTermProducts(termCount(p), factor.terms.size)
  return trim(p.map((c) => c.multiply(factor, deadline)))
}

/** s^k · p */
export function shift(p: Polynomial, k: number): Polynomial {
  if (p.length === 0 || k === 0) return p
  const variables = p[0]!.variables
  return [...Array.from({ length: k }, () => new Multinomial(variables)), ...p]
}

export function power(p: Polynomial, exponent: number, variables: number, deadline?: Deadline): Polynomial {
  let result: Polynomial = [Multinomial.constant(variables, ONE)]
  for (let i = 0; i < exponent; i++) result = multiply(result, p, deadline)
  return result
}

/** Terms over every power of s: what the cost of a multiplication grows with. */
export function termCount(p: Polynomial): number {
  return p.reduce((sum, c) => sum + c.terms.size, 0)
}

export function isZeroPolynomial(p: Polynomial): boolean {
  return p.length === 0
}

/** Exact coefficients with the parameters at exact values, lowest power first, trimmed of zero high powers. */
export function substituteExact(p: Polynomial, values: readonly Rational[], deadline?: Deadline): Rational[] {
  const out = p.map((c) => c.evaluateExact(values, deadline))
  let n = out.length
  while (n > 0 && isZero(out[n - 1]!)) n--
  return out.slice(0, n)
}

/** Substituted coefficients as compiled evaluators, for many cheap substitutions. */
export function compilePolynomial(p: Polynomial): (values: ArrayLike<number>) => number[] {
  const compiled = p.map((c) => c.compile())
  return (values) => compiled.map((f) => f(values))
}

/** Coefficients highest power first, as the contract lists them; [0] for the zero polynomial. */
export function descending<T>(ascending: readonly T[], zero: T): T[] {
  return ascending.length === 0 ? [zero] : [...ascending].reverse()
}

/** Highest nonzero power first, with leading zeros removed (the degree can drop at particular values). */
export function trimNumbers(descendingCoefficients: number[]): number[] {
  let i = 0
  while (i < descendingCoefficients.length - 1 && descendingCoefficients[i] === 0) i++
  return descendingCoefficients.slice(i)
}


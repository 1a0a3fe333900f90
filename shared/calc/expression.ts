import { type MathNode, create, parseDependencies } from 'mathjs'
import { LoopInputError } from './errors'
import { MAX_EXPONENT, MAX_TERM_PRODUCTS, WorkLimitError, formatCount } from './limits'
import { Multinomial } from './multinomial'
import { type Polynomial, add, constantPolynomial, multiply, negate, power, scale, shift, termCount } from './polynomial'
import { type Rational, ONE, rationalFromNumber } from './rational'

/**
 * Block expressions (calc-contract.md: `+ - * / ^`, parentheses, decimal and
 * scientific numbers, parameters and s) read with mathjs's parser and turned
 * into exact quotients: a polynomial in s over a divisor free of s.
 */
export interface Quotient {
  num: Polynomial
  /** Never zero and never holding s: a divisor with s is a negative power of s and is refused. */
  den: Multinomial
}

export interface ExpressionScope {
  /** Parameter symbol → index in the exponent vectors. */
  readonly symbols: ReadonlyMap<string, number>
  readonly variables: number
}

/**
 * mathjs's parser alone, in an instance of its own (mathjs's documented custom bundling): the engine only parses and
 * walks the nodes. The default instance, which the bare `parse` export belongs to, builds every function mathjs has.
 */
// mathjs declares its dependency maps as members of one record, so they read as possibly undefined here.
const { parse } = create({ parseDependencies: parseDependencies! })

const OPERATORS: Record<string, string> = { '+': 'add', '-': 'subtract', '*': 'multiply', '/': 'divide', '^': 'pow' }

interface Reading {
  scope: ExpressionScope
  field: string
  text: string
  /** Whether s may appear (not in a dead time). */
  sAllowed: boolean
}

/** Reads `text` at `field`; refuses, naming the field, anything the contract does not allow. */
export function readExpression(text: string, field: string, scope: ExpressionScope, options: { sAllowed?: boolean } = {}): Quotient {
  const reading: Reading = { scope, field, text, sAllowed: options.sAllowed ?? true }
  const stray = /[^A-Za-z0-9_.\s+\-*/^()]/.exec(text)
  if (stray) refuse(reading, `holds "${stray[0]}"; only numbers, parameters, s, + - * / ^ and parentheses are allowed`)
  let node: MathNode
  try {
    node = parse(text)
  } catch (error) {
    const message = error instanceof Error ? error.message : String(error)
    if (/end of expression/i.test(message)) throw new LoopInputError(field, `"${text}" is not a complete expression`)
    throw new LoopInputError(field, `"${text}" cannot be read (${message.replace(/^SyntaxError:\s*/, '').toLowerCase()})`)
  }
  try {
    return convert(node, reading)
  } catch (error) {
    if (error instanceof WorkLimitError) refuse(reading, error.message)
    throw error
  }
}

function refuse(reading: Reading, reason: string): never {
  throw new LoopInputError(reading.field, `"${reading.text}" ${reason}`)
}

function constant(reading: Reading, value: Rational): Quotient {
  const v = reading.scope.variables
  return { num: constantPolynomial(Multinomial.constant(v, value)), den: Multinomial.constant(v, ONE) }
}

function convert(node: MathNode, reading: Reading): Quotient {
  const n = node as MathNode & Record<string, any>
  switch (node.type) {
    case 'ParenthesisNode':
      return convert(n.content, reading)
    case 'ConstantNode': {
      if (typeof n.value !== 'number') refuse(reading, `holds ${JSON.stringify(n.value)}, which is not a number`)
      if (!Number.isFinite(n.value)) refuse(reading, 'holds a number that is not finite')
      return constant(reading, rationalFromNumber(n.value))
    }
    case 'SymbolNode': {
      const v = reading.scope.variables
      if (n.name === 's') {
        if (!reading.sAllowed) refuse(reading, 'depends on s; a dead time is a number of seconds, an expression of the parameters only')
        return { num: shift([Multinomial.constant(v, ONE)], 1), den: Multinomial.constant(v, ONE) }
      }
      const index = reading.scope.symbols.get(n.name)
      if (index === undefined) refuse(reading, `uses "${n.name}", which is not a defined parameter`)
      return { num: [Multinomial.variable(v, index)], den: Multinomial.constant(v, ONE) }
    }
    case 'OperatorNode': {
      const fn = n.fn as string
      if (fn === 'unaryMinus') {
        const a = convert(n.args[0], reading)
        return { num: negate(a.num), den: a.den }
      }
      if (fn === 'unaryPlus') return convert(n.args[0], reading)
      if (OPERATORS[n.op] !== fn || n.args.length !== 2) refuse(reading, `uses the operator "${n.op}"; only + - * / ^ and parentheses are allowed`)
      if (fn === 'pow') return raise(n.args[0], n.args[1], reading)
      const a = convert(n.args[0], reading)
      const b = convert(n.args[1], reading)
      if (fn === 'add') return sum(a, b, 1)
      if (fn === 'subtract') return sum(a, b, -1)
      if (fn === 'multiply') return simplify({ num: multiply(a.num, b.num), den: a.den.multiply(b.den) })
      return divide(a, b, reading)
    }
    case 'FunctionNode':
      return refuse(reading, `uses the function ${n.fn?.name ?? ''}(); only + - * / ^ and parentheses are allowed`)
    default:
      return refuse(reading, 'holds something other than numbers, parameters, s, + - * / ^ and parentheses')
  }
}

function sum(a: Quotient, b: Quotient, sign: 1 | -1): Quotient {
  const bNum = sign === 1 ? b.num : negate(b.num)
  if (a.den.equals(b.den)) return { num: add(a.num, bNum), den: a.den }
  return simplify({ num: add(scale(a.num, b.den), scale(bNum, a.den)), den: a.den.multiply(b.den) })
}

function divide(a: Quotient, b: Quotient, reading: Reading): Quotient {
  if (b.num.length === 0) refuse(reading, 'divides by zero')
  if (b.num.length > 1) refuse(reading, 'divides by an expression in s (a negative power of s); write the block as numerator and denominator polynomials in s')
  return simplify({ num: scale(a.num, b.den), den: a.den.multiply(b.num[0]!) })
}

function raise(baseNode: MathNode, exponentNode: MathNode, reading: Reading): Quotient {
  const exponent = convert(exponentNode, reading)
  const value = exponent.num.length === 0 ? ONE.sub(ONE) : exponent.num.length === 1 ? exponent.num[0]!.constantValue : null
  const divisor = exponent.den.constantValue
  if (value === null || divisor === null) refuse(reading, 'has an exponent that is not a number; exponents are whole numbers')
  const k = value.div(divisor)
  if (k.d !== 1n) refuse(reading, `has the exponent ${k.toString()}, which is not a whole number`)
  const magnitude = Number(k.n)
  if (magnitude > MAX_EXPONENT) refuse(reading, `has the exponent ${k.toString()}, above the limit of ${MAX_EXPONENT}`)
  const base = convert(baseNode, reading)
  const v = reading.scope.variables
  const products = Math.max(powerProducts(base.num, magnitude), powerProducts([base.den], magnitude))
  if (products > MAX_TERM_PRODUCTS)
    refuse(reading, `raises ${termCount(base.num)} terms to the power ${magnitude}: about ${formatCount(products)} term products in its last multiplication, above the limit of ${formatCount(MAX_TERM_PRODUCTS)}`)
  if (k.s > 0n) return simplify({ num: power(base.num, magnitude, v), den: base.den.power(magnitude) })
  if (base.num.length === 0) refuse(reading, 'raises zero to a negative power')
  if (base.num.length > 1) refuse(reading, 'has a negative power of s; write the block as numerator and denominator polynomials in s')
  return simplify({ num: [base.den.power(magnitude)], den: base.num[0]!.power(magnitude) })
}

/**
 * Term products of the last multiplication of p^k (p^(k−1) × p), estimated before any work: p^(k−1) has at
 * most C(k−2+T, T−1) terms for T terms in p (the monomials of degree k−1 in T symbols), and at most one per
 * exponent vector the powers of s and of each parameter can reach.
 */
function powerProducts(p: Polynomial, k: number): number {
  const t = termCount(p)
  if (k < 2 || t < 2) return 0
  let byCount = 1
  for (let i = 1; i <= t - 1; i++) byCount = (byCount * (k - 1 + i - 1 + 1)) / i
  const highest = new Map<number, number>()
  for (const c of p) for (const { exponents } of c.terms.values()) exponents.forEach((e, i) => highest.set(i, Math.max(highest.get(i) ?? 0, e)))
  let byExponents = (k - 1) * (p.length - 1) + 1
  for (const e of highest.values()) byExponents *= (k - 1) * e + 1
  return Math.min(byCount, byExponents) * t
}

/** A divisor that is only a number goes into the coefficients, so most expressions keep the divisor 1. */
function simplify(q: Quotient): Quotient {
  const c = q.den.constantValue
  if (c === null || c.equals(ONE)) return q
  const inverse = ONE.div(c)
  return { num: q.num.map((m) => m.scale(inverse)), den: Multinomial.constant(q.den.variables, ONE) }
}

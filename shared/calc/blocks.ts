import type { LoopFile } from '../schemas/loop'
import { LoopInputError } from './errors'
import { type ExpressionScope, type Quotient, readExpression } from './expression'
import { MAX_DEGREE, WorkLimitError } from './limits'
import { Multinomial } from './multinomial'
import { padeDelay } from './pade'
import { type TransferFunction, degree, multiply, scale } from './polynomial'
import { type Rational, isZero, rationalFromNumber } from './rational'
import { type VariableTex, defaultSymbolTex } from './tex'

/** The parameters of one loop file, in the file's order: names, TeX and values. */
export interface LoopParameters {
  readonly symbols: readonly string[]
  readonly scope: ExpressionScope
  readonly tex: VariableTex
  readonly values: readonly number[]
  readonly exactValues: readonly Rational[]
}

/** One block read from the file: its rational part exactly, its dead time, and the Padé form the reduction uses. */
export interface BlockModel {
  readonly id: string
  readonly rational: TransferFunction
  /** θ = num/den (no s in it), or null without dead time. */
  readonly delay: { num: Multinomial; den: Multinomial } | null
  readonly pade: TransferFunction | null
  /** rational × Padé approximant of the dead time. */
  readonly approximated: TransferFunction
}

export function loopParameters(loop: LoopFile): LoopParameters {
  const symbols = Object.keys(loop.parameters)
  const values = symbols.map((s) => loop.parameters[s]!.value)
  return {
    symbols,
    scope: { symbols: new Map(symbols.map((s, i) => [s, i])), variables: symbols.length },
    tex: symbols.map((s) => loop.parameters[s]!.tex ?? defaultSymbolTex(s)),
    values,
    exactValues: values.map(rationalFromNumber),
  }
}

/** A divisor written in an expression must not vanish at the parameters' values (1/Ti with Ti = 0). */
function checkDivisor(q: Quotient, field: string, parameters: LoopParameters): void {
  if (isZero(q.den.evaluateExact(parameters.exactValues))) throw new LoopInputError(field, 'divides by an expression that is zero at the parameters\' values')
}

export function readBlock(id: string, loop: LoopFile, parameters: LoopParameters, padeOrder: number): BlockModel {
  try {
    return readBlockModel(id, loop, parameters, padeOrder)
  } catch (error) {
    if (error instanceof WorkLimitError) throw new LoopInputError(`blocks.${id}`, `the block (with its dead time's Padé form) ${error.message}`)
    throw error
  }
}

function readBlockModel(id: string, loop: LoopFile, parameters: LoopParameters, padeOrder: number): BlockModel {
  const block = loop.blocks[id]!
  const field = `blocks.${id}`
  const num = readExpression(block.num, `${field}.num`, parameters.scope)
  const den = readExpression(block.den, `${field}.den`, parameters.scope)
  checkDivisor(num, `${field}.num`, parameters)
  checkDivisor(den, `${field}.den`, parameters)
  if (den.num.length === 0) throw new LoopInputError(`${field}.den`, `"${block.den}" is identically zero`)
  if (den.num.every((c) => isZero(c.evaluateExact(parameters.exactValues))))
    throw new LoopInputError(`${field}.den`, `"${block.den}" is zero at the parameters' values`)
  for (const [name, q, text] of [['num', num, block.num], ['den', den, block.den]] as const)
    if (degree(q.num) > MAX_DEGREE) throw new LoopInputError(`${field}.${name}`, `"${text}" has degree ${degree(q.num)} in s, above the limit of ${MAX_DEGREE}`)

  // (Pn/qn) / (Pd/qd) = Pn·qd / (Pd·qn): the divisors, free of s, move across.
  const rational: TransferFunction = { num: scale(num.num, den.den), den: scale(den.num, num.den) }

  let delay: BlockModel['delay'] = null
  if (block.delay !== undefined) {
    const theta = readExpression(block.delay, `${field}.delay`, parameters.scope, { sAllowed: false })
    checkDivisor(theta, `${field}.delay`, parameters)
    const thetaNum = theta.num[0] ?? new Multinomial(parameters.scope.variables)
    const value = thetaNum.evaluateExact(parameters.exactValues).div(theta.den.evaluateExact(parameters.exactValues))
    if (value.s < 0n && !isZero(value)) throw new LoopInputError(`${field}.delay`, `"${block.delay}" is negative at the parameters' values; a dead time is zero or more`)
    if (!thetaNum.isZero) delay = { num: thetaNum, den: theta.den }
  }
  const pade = delay ? padeDelay(delay.num, delay.den, padeOrder) : null
  const approximated = pade ? { num: multiply(rational.num, pade.num), den: multiply(rational.den, pade.den) } : rational
  return { id, rational, delay, pade, approximated }
}

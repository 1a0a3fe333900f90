import { type LoopFile, loopFileSchema } from '../schemas/loop'
import { type BlockModel, loopParameters, readBlock } from './blocks'
import { type CriterionRow, criteriaRows } from './criteria'
import { CalcTimeoutError, Deadline, LoopInputError } from './errors'
import { numericBlocks } from './evaluate'
import { frequencyResponse } from './frequency'
import { DEFAULT_DEADLINE_MS, MAX_FILE_BYTES, MAX_STABILITY_RANGE_DEGREE, MAX_TOLERANCE_CORNERS, SizeLimitError, WorkLimitError, formatCount } from './limits'
import { stabilityMargins } from './margins'
import { openLoopAt, openLoopModel } from './open-loop'
import { compilePolynomial, substituteExact } from './polynomial'
import { type Rational, rationalToNumber } from './rational'
import { type Step, blockOrder, checkDegrees, reduceStructure } from './reduce'
import { polynomialRoots } from './roots'
import { routhArray } from './routh'
import { repeatedAxisPoles, stabilityVerdict } from './stability'
import { stableIntervals } from './stability-range'
import { dcGain, steadyStateErrors } from './steady-state'
import { stepResponse } from './step'
import { fractionTex, numericPolynomialTex, polynomialTex, texProblem } from './tex'
import { type ToleranceCorners, toleranceCorners } from './tolerance'
import type { FrequencyResponse, Margins, Root, RouthResult, Stability, StepMetrics } from './types'

export { LoopInputError, CalcTimeoutError }
export type { Step }

/** The result document of calc-contract.md; field names as the contract spells them. */
export interface CalcResult {
  title: string | null
  closed_loop: { num: number[]; den: number[]; num_tex: string; den_tex: string }
  open_loop: { num: number[]; den: number[]; delay_s: number | null; num_tex: string; den_tex: string } | null
  order: { num: number; den: number }
  poles: Root[]
  zeros: Root[]
  stability: Stability
  routh: RouthResult
  dc_gain: number | null
  steady_state_error: { step: number | null; ramp: number | null }
  margins: Margins | null
  step: StepMetrics | null
  stability_range: { parameter: string; intervals: Array<[number, number]> } | null
  tolerance_corners: ToleranceCorners
  criteria: CriterionRow[]
  steps: Step[]
  warnings: string[]
  plots: { step: { t: number[]; y: number[] } | null; frequency: FrequencyResponse | null }
}

export interface EvaluateOptions {
  /** Time limit of the whole evaluation in ms (default 10 000). */
  deadlineMs?: number
}

/** The loop file as JSON text (the command line, an upload): size and JSON checked first. */
export function evaluateLoopText(text: string, options: EvaluateOptions = {}): CalcResult {
  const bytes = new TextEncoder().encode(text).length
  if (bytes > MAX_FILE_BYTES) throw new LoopInputError('file', `the loop file is ${(bytes / 1024).toFixed(1)} KiB, above the limit of ${MAX_FILE_BYTES / 1024} KiB`)
  let parsed: unknown
  try {
    parsed = JSON.parse(text)
  } catch (error) {
    throw new LoopInputError('file', `the loop file is not valid JSON (${error instanceof Error ? error.message : String(error)})`)
  }
  return evaluateLoop(parsed, options)
}

/** Validates a loop file with the shared schema and the engine's own checks; the first problem becomes a LoopInputError. */
export function parseLoopFile(input: unknown): LoopFile {
  const text = JSON.stringify(input)
  if (text !== undefined && new TextEncoder().encode(text).length > MAX_FILE_BYTES)
    throw new LoopInputError('file', `the loop file is above the limit of ${MAX_FILE_BYTES / 1024} KiB`)
  if (input === null || typeof input !== 'object' || Array.isArray(input)) throw new LoopInputError('file', 'the loop file is not a JSON object')
  const result = loopFileSchema.safeParse(input)
  if (!result.success) {
    const issue = result.error.issues[0]!
    throw new LoopInputError(issue.path.length ? issue.path.join('.') : 'file', issue.message)
  }
  const loop = result.data
  // The corners multiply every other cost: refused before anything is computed (calc-contract.md, `tolerance_corners`).
  const banded = Object.values(loop.parameters).filter((p) => (p.min ?? p.value) !== (p.max ?? p.value)).length
  if (2 ** banded > MAX_TOLERANCE_CORNERS)
    throw new LoopInputError(
      'parameters',
      `${banded} parameters have a tolerance band: ${formatCount(2 ** banded)} tolerance corners, above the limit of ${formatCount(MAX_TOLERANCE_CORNERS)} (${Math.log2(MAX_TOLERANCE_CORNERS)} banded parameters)`,
    )
  for (const [symbol, p] of Object.entries(loop.parameters)) {
    const problem = p.tex === undefined ? null : texProblem(p.tex)
    if (problem) throw new LoopInputError(`parameters.${symbol}.tex`, `KaTeX cannot typeset "${p.tex}" (${problem})`)
  }
  return loop
}

export function evaluateLoop(input: unknown, options: EvaluateOptions = {}): CalcResult {
  try {
    return evaluateParsed(input, options)
  } catch (error) {
    // A multiplication of the reduction past the limit: the structure asked for it (blocks name themselves).
    if (error instanceof WorkLimitError) throw new LoopInputError('structure', `the reduction of the loop ${error.message}`)
    // The symbolic transfer functions are typeset from the structure's reduction.
    if (error instanceof SizeLimitError) throw new LoopInputError('structure', `the symbolic transfer function ${error.message}`)
    throw error
  }
}

function evaluateParsed(input: unknown, options: EvaluateOptions): CalcResult {
  const deadline = new Deadline(options.deadlineMs ?? DEFAULT_DEADLINE_MS)
  const loop = parseLoopFile(input)
  const warnings: string[] = []
  const parameters = loopParameters(loop)
  const padeOrder = loop.delay_approximation.order

  const blocks = new Map<string, BlockModel>()
  for (const id of Object.keys(loop.blocks)) blocks.set(id, readBlock(id, loop, parameters, padeOrder))
  const used = new Set(blockOrder(loop.structure))
  const unused = [...blocks.keys()].filter((id) => !used.has(id))
  if (unused.length) warnings.push(`Block${unused.length > 1 ? 's' : ''} ${unused.join(', ')} ${unused.length > 1 ? 'are' : 'is'} defined but not part of the structure.`)
  const usedParameters = new Set<number>()
  for (const id of used) {
    const b = blocks.get(id)!
    for (const c of [...b.approximated.num, ...b.approximated.den]) for (const i of c.usedVariables()) usedParameters.add(i)
  }
  const idle = parameters.symbols.filter((_, i) => !usedParameters.has(i))
  if (idle.length) warnings.push(`Parameter${idle.length > 1 ? 's' : ''} ${idle.join(', ')} ${idle.length > 1 ? 'appear' : 'appears'} in no block of the structure.`)

  checkDegrees(loop.structure, blocks)
  const reduction = reduceStructure(loop.structure, blocks, parameters, { deadline })
  const steps = reduction.steps
  const closed = reduction.closedLoop

  // Numbers last: exact substitution, then one division by the leading coefficient.
  const numExact = substituteExact(closed.num, parameters.exactValues, deadline)
  const denExact = substituteExact(closed.den, parameters.exactValues, deadline)
  if (denExact.length === 0) throw new LoopInputError('structure', 'the closed loop\'s denominator is zero at the parameters\' values')
  const lead = denExact[denExact.length - 1]!
  const toNumbers = (p: Rational[]) => (p.length === 0 ? [0] : p.map((c) => rationalToNumber(c.div(lead))).reverse())
  const num = toNumbers(numExact)
  const den = toNumbers(denExact)
  for (const [field, list] of [['num', num], ['den', den]] as const)
    if (list.some((c) => !Number.isFinite(c))) throw new LoopInputError('structure', `the closed loop's ${field === 'num' ? 'numerator' : 'denominator'} coefficients overflow at the parameters' values`)
  if (numExact.length === 0) warnings.push('The closed loop T(s) is identically zero at the parameters\' values.')
  steps.push({
    kind: 'numeric',
    title: 'Closed loop, normalised',
    tex: `T(s) = ${fractionTex(numericPolynomialTex(num), numericPolynomialTex(den))}`,
    text: 'Numerator and denominator divided by the leading coefficient of the denominator.',
  })

  const poles = polynomialRoots(den)
  const zeros = num.length > 1 ? polynomialRoots(num) : []
  const routh = routhArray(den)
  const stability = stabilityVerdict(den, routh, poles)
  steps.push({
    kind: 'check',
    title: 'Routh array',
    tex: `\\text{sign changes in the first column: } ${routh.sign_changes}`,
    text: [`The Routh array of the denominator has ${routh.sign_changes} sign change${routh.sign_changes === 1 ? '' : 's'} in its first column: the loop is ${stability}.`, ...routh.notes].join(' '),
  })
  warnings.push(...commonFactorWarnings(poles, zeros))
  if (repeatedAxisPoles(poles).length > 0)
    warnings.push('T(s) has a repeated pole on the imaginary axis: its response grows without bound, so the loop is judged unstable, not marginal.')

  const dc_gain = dcGain(numExact, denExact)
  if (dc_gain === null) warnings.push('T(0) is unbounded: the closed loop has a pole at s = 0.')
  let steady_state_error = { step: null as number | null, ramp: null as number | null }
  if (stability === 'stable') {
    steady_state_error = steadyStateErrors(numExact, denExact)
    if (steady_state_error.ramp === null) warnings.push('The steady-state error to a unit ramp is unbounded (1 − T(0) ≠ 0).')
  } else warnings.push(`The loop is ${stability}: it has no steady-state errors and no step metrics.`)

  // Open loop and the frequency-domain checks, delays exact.
  let open_loop: CalcResult['open_loop'] = null
  let margins: Margins | null = null
  let frequency: FrequencyResponse | null = null
  let openLoopFactory: ReturnType<typeof openLoopAt> | null = null
  const blocksAt = numericBlocks(blocks)
  const nominalBlocks = blocksAt(parameters.values)
  if (reduction.outer) {
    const model = openLoopModel(reduction.outer, blocks, parameters, deadline)
    const olNumExact = substituteExact(model.tf.num, parameters.exactValues, deadline)
    const olDenExact = substituteExact(model.tf.den, parameters.exactValues, deadline)
    if (olDenExact.length === 0) throw new LoopInputError('structure', 'the open loop\'s denominator is zero at the parameters\' values')
    const olLead = olDenExact[olDenExact.length - 1]!
    const olNumbers = (p: Rational[]) => (p.length === 0 ? [0] : p.map((c) => rationalToNumber(c.div(olLead))).reverse())
    openLoopFactory = openLoopAt(model)
    const openLoop = openLoopFactory(parameters.values, nominalBlocks, { num: olNumbers(olNumExact), den: olNumbers(olDenExact) })
    open_loop = {
      num: olNumbers(olNumExact),
      den: olNumbers(olDenExact),
      delay_s: openLoop.delay_s,
      num_tex: polynomialTex(model.tf.num, parameters.tex),
      den_tex: polynomialTex(model.tf.den, parameters.tex),
    }
    if (model.delayBlocks === null)
      warnings.push('A dead time sits inside an inner loop or a parallel path, so L(s) is no rational part times one delay: open_loop lists its Padé form, and the margins use the exact delay through L(jω).')
    if (model.referredSign === -1)
      warnings.push('The outer loop has positive feedback (T = G/(1 − GH)): its margins are those of −L(s) = −G(s)H(s) against the critical point −1, the same as L(s) against +1; the frequency plot shows −L(jω).')
    const found = stabilityMargins(openLoop)
    margins = found
    warnings.push(...found.warnings)
    frequency = frequencyResponse(openLoop)
  } else warnings.push('The outermost node is no feedback node: there is no open loop, so no margins.')

  // Step response: only a stable, proper closed loop has one.
  let step: StepMetrics | null = null
  let stepPlot: { t: number[]; y: number[] } | null = null
  if (stability === 'stable') {
    if (num.length > den.length) warnings.push('T(s) has more zeros than poles (improper): no step response.')
    else {
      const response = stepResponse(num, den, { deadline: deadline.at, limitMs: deadline.limitMs, poles })
      step = response.metrics
      stepPlot = { t: response.t, y: response.y }
      warnings.push(...response.warnings)
    }
  }
  if (Date.now() > deadline.at) throw new CalcTimeoutError('the step response', deadline.limitMs)

  // Stable range of one parameter, the others at their values.
  let stability_range: CalcResult['stability_range'] = null
  const range = loop.analysis.stability_range
  if (range) {
    const index = parameters.symbols.indexOf(range.parameter)
    const rows = descendingCoefficients(closed.den).map((c) => c.inVariable(index, parameters.values))
    const width = Math.max(...rows.map((r) => r.length))
    const padded = rows.map((r) => [...new Array<number>(width - r.length).fill(0), ...r])
    const hurwitzDegree = Math.max(rows.length - 2, 0) * (width - 1)
    if (hurwitzDegree > MAX_STABILITY_RANGE_DEGREE)
      throw new LoopInputError(
        'analysis.stability_range.parameter',
        `sweeping ${range.parameter} (up to its power ${width - 1} in a coefficient of a degree-${rows.length - 1} denominator) needs a polynomial of degree ${hurwitzDegree} in ${range.parameter}, above the limit of ${MAX_STABILITY_RANGE_DEGREE}`,
      )
    let intervals: Array<[number, number]>
    try {
      intervals = stableIntervals(padded, range.search, { deadline: deadline.at, limitMs: deadline.limitMs })
    } catch (error) {
      if (error instanceof CalcTimeoutError || error instanceof LoopInputError) throw error
      // Measured: K/(s + 1)^40 swept in K fails here (its Hurwitz determinant overflows doubles); say so, never a 500.
      throw new LoopInputError('analysis.stability_range', `the stable range of ${range.parameter} cannot be computed in double precision for this loop (${error instanceof Error ? error.message : String(error)})`)
    }
    stability_range = { parameter: range.parameter, intervals }
    if (Date.now() > deadline.at) throw new CalcTimeoutError('the stability range', deadline.limitMs)
  }

  const tolerance_corners = toleranceCorners(
    loop,
    parameters,
    {
      closedNum: compilePolynomial(closed.num),
      closedDen: compilePolynomial(closed.den),
      numericBlocks: blocksAt,
      openLoop: openLoopFactory ? (values, numeric) => openLoopFactory!(values, numeric) : null,
    },
    deadline,
  )
  if (!tolerance_corners.all_stable) warnings.push(`${tolerance_corners.unstable_count} of ${tolerance_corners.count} tolerance corners are not stable.`)

  const criteria = criteriaRows(loop.criteria, { stability, margins, step, steady_state_error })

  return {
    title: loop.title ?? null,
    closed_loop: { num, den, num_tex: polynomialTex(closed.num, parameters.tex), den_tex: polynomialTex(closed.den, parameters.tex) },
    open_loop,
    order: { num: Math.max(num.length - 1, 0), den: den.length - 1 },
    poles,
    zeros,
    stability,
    routh,
    dc_gain,
    steady_state_error,
    margins,
    step,
    stability_range,
    tolerance_corners,
    criteria,
    steps,
    warnings,
    plots: { step: stepPlot, frequency },
  }
}

function descendingCoefficients<T>(ascending: readonly T[]): T[] {
  return [...ascending].reverse()
}

/** Poles and zeros that coincide: the reduction keeps such factors, so the sheet names them. */
function commonFactorWarnings(poles: Root[], zeros: Root[]): string[] {
  const out: string[] = []
  const taken = new Set<number>()
  for (const z of zeros) {
    if (z.im < 0) continue
    const i = poles.findIndex((p, k) => !taken.has(k) && Math.hypot(p.re - z.re, p.im - z.im) <= 1e-6 * Math.max(1, Math.hypot(z.re, z.im)))
    if (i < 0) continue
    taken.add(i)
    const where = z.im === 0 ? `s = ${format(z.re)}` : `s = ${format(z.re)} ± ${format(z.im)}j`
    out.push(`Numerator and denominator of T(s) share a factor (a zero and a pole at ${where}); it is kept, not cancelled, as the reduction gives it.`)
  }
  return out
}

function format(x: number): string {
  return String(Number(x.toPrecision(6)))
}


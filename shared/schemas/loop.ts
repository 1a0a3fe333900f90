import { z } from 'zod'
import { MAX_BLOCKS, MAX_PADE_ORDER } from '../calc/limits'
import { isStorableText, recordKey, storable, storableTextMessage } from './text'

/**
 * The loop file of calc-contract.md. Forms (vee-validate), the API route and
 * the engine validate with this one schema; an issue's path joined with dots
 * is the field the engineer sees (`blocks.P.den`, `parameters.Kc.min`).
 * Expressions are checked by the engine (shared/calc/expression.ts), which
 * needs the parameters to read them.
 */

/** Words mathjs's parser reads as operators, so they cannot be parameter names. */
const PARSER_WORDS = new Set(['mod', 'to', 'in', 'and', 'or', 'xor', 'not'])
const SYMBOL = /^[A-Za-z][A-Za-z0-9_]*$/
/** Block ids appear in field names and typeset subscripts, so they keep to a plain alphabet too. */
const BLOCK_ID = /^[A-Za-z][A-Za-z0-9_-]*$/

export const blockRoles = ['controller', 'actuator', 'plant', 'sensor', 'compensator', 'other'] as const

export const criterionBounds = {
  phase_margin_deg: 'min',
  gain_margin_db: 'min',
  overshoot_pct: 'max',
  settling_time_s: 'max',
  rise_time_s: 'max',
  steady_state_error_step: 'max',
  steady_state_error_ramp: 'max',
} as const
export type CriterionName = keyof typeof criterionBounds

/** Why a symbol is not acceptable, or null when it is. */
export function symbolProblem(symbol: string): string | null {
  if (symbol === 's') return '"s" is the Laplace variable and cannot be a parameter'
  if (!SYMBOL.test(symbol)) return `"${symbol}" is not a symbol: start with a letter and use letters, digits and _ only`
  if (PARSER_WORDS.has(symbol)) return `"${symbol}" is an operator word of the expression parser and cannot be a parameter`
  return null
}

const finite = (what: string) =>
  z.number({ required_error: `Enter the ${what}`, invalid_type_error: `The ${what} must be a number` }).finite(`The ${what} must be a finite number`)

export const parameterSchema = z
  .object({
    value: finite('value'),
    unit: storable(z.string().max(40)).optional(),
    min: finite('minimum').optional(),
    max: finite('maximum').optional(),
    tex: storable(z.string().min(1, 'Enter how the symbol is typeset, or leave it out').max(200)).optional(),
    note: storable(z.string().max(2000)).optional(),
  })
  .superRefine((p, ctx) => {
    if (p.min !== undefined && p.max !== undefined && p.min > p.max)
      ctx.addIssue({ code: 'custom', path: ['min'], message: `min ${p.min} is above max ${p.max}` })
    else if (p.min !== undefined && p.value < p.min)
      ctx.addIssue({ code: 'custom', path: ['value'], message: `value ${p.value} is below min ${p.min}` })
    else if (p.max !== undefined && p.value > p.max)
      ctx.addIssue({ code: 'custom', path: ['value'], message: `value ${p.value} is above max ${p.max}` })
  })
export type LoopParameter = z.infer<typeof parameterSchema>

const expressionText = (what: string) =>
  storable(
    z.string({ required_error: `Enter the ${what}`, invalid_type_error: `The ${what} must be text` }).trim().min(1, `Enter the ${what}`).max(4000),
  )

export const blockSchema = z.object({
  role: z.enum(blockRoles, { errorMap: () => ({ message: `Choose a role: ${blockRoles.join(', ')}` }) }),
  label: storable(z.string().max(200)).optional(),
  num: expressionText('numerator'),
  den: expressionText('denominator').default('1'),
  delay: expressionText('dead time').optional(),
})
export type LoopBlock = z.infer<typeof blockSchema>

/** A node of the block diagram (calc-contract.md, `structure`). */
export type StructureNode =
  | string
  | { series: StructureNode[] }
  | { parallel: StructureNode[]; signs?: Array<1 | -1> }
  | { feedback: { forward: StructureNode; return?: StructureNode | null; sign?: 1 | -1 } }

type Path = Array<string | number>

/** Walks a node and reports the first problem at its exact path; block ids are checked against `blocks`. */
function checkNode(node: unknown, path: Path, blocks: Set<string> | null, ctx: z.RefinementCtx): void {
  const fail = (message: string, at: Path = path) => ctx.addIssue({ code: 'custom', path: at, message })
  if (typeof node === 'string') {
    if (!isStorableText(node)) return fail(storableTextMessage)
    if (blocks && !blocks.has(node)) fail(`block "${node}" is named here but not defined in blocks`)
    return
  }
  if (node === null || typeof node !== 'object' || Array.isArray(node)) {
    fail('a node is a block id, or an object with one of series, parallel or feedback')
    return
  }
  const keys = Object.keys(node)
  const o = node as Record<string, unknown>
  if ('series' in o) {
    if (keys.length !== 1) return fail(`a series node holds only "series" (found ${keys.join(', ')})`)
    if (!Array.isArray(o.series) || o.series.length === 0) return fail('series needs a list of at least one node', [...path, 'series'])
    o.series.forEach((child, i) => checkNode(child, [...path, 'series', i], blocks, ctx))
    return
  }
  if ('parallel' in o) {
    const extra = keys.filter((k) => k !== 'parallel' && k !== 'signs')
    if (extra.length) return fail(`a parallel node holds only "parallel" and "signs" (found ${extra.join(', ')})`)
    if (!Array.isArray(o.parallel) || o.parallel.length === 0) return fail('parallel needs a list of at least one node', [...path, 'parallel'])
    if (o.signs !== undefined) {
      if (!Array.isArray(o.signs) || o.signs.length !== o.parallel.length)
        return fail(`signs needs one entry per path (${o.parallel.length})`, [...path, 'signs'])
      const bad = o.signs.findIndex((x) => x !== 1 && x !== -1)
      if (bad >= 0) return fail('a sign is 1 or -1', [...path, 'signs', bad])
    }
    o.parallel.forEach((child, i) => checkNode(child, [...path, 'parallel', i], blocks, ctx))
    return
  }
  if ('feedback' in o) {
    if (keys.length !== 1) return fail(`a feedback node holds only "feedback" (found ${keys.join(', ')})`)
    const f = o.feedback
    const at = [...path, 'feedback']
    if (f === null || typeof f !== 'object' || Array.isArray(f)) return fail('feedback holds forward, return and sign', at)
    const fo = f as Record<string, unknown>
    const extra = Object.keys(fo).filter((k) => !['forward', 'return', 'sign'].includes(k))
    if (extra.length) return fail(`feedback holds only forward, return and sign (found ${extra.join(', ')})`, at)
    if (fo.forward === undefined) return fail('feedback needs a forward path', [...at, 'forward'])
    if (fo.sign !== undefined && fo.sign !== 1 && fo.sign !== -1) return fail('sign is -1 (negative feedback) or 1 (positive)', [...at, 'sign'])
    checkNode(fo.forward, [...at, 'forward'], blocks, ctx)
    if (fo.return !== undefined && fo.return !== null) checkNode(fo.return, [...at, 'return'], blocks, ctx)
    return
  }
  fail('a node is a block id, or an object with one of series, parallel or feedback')
}

export const structureSchema = z.custom<StructureNode>((v) => v !== undefined, { message: 'Enter the structure' }).superRefine((node, ctx) => checkNode(node, [], null, ctx))

const criterionSchema = z
  .object({ min: finite('limit').optional(), max: finite('limit').optional() })
  .strict('a criterion holds min or max')

export const loopFileSchema = z
  .object({
    title: storable(z.string().max(300)).optional(),
    parameters: z
      .record(recordKey, parameterSchema)
      .default({})
      .superRefine((params, ctx) => {
        for (const symbol of Object.keys(params)) {
          const problem = symbolProblem(symbol)
          if (problem) ctx.addIssue({ code: 'custom', path: [symbol], message: problem })
        }
      }),
    blocks: z
      .record(recordKey, blockSchema)
      .superRefine((blocks, ctx) => {
        const ids = Object.keys(blocks)
        if (ids.length === 0) ctx.addIssue({ code: 'custom', path: [], message: 'define at least one block' })
        if (ids.length > MAX_BLOCKS) ctx.addIssue({ code: 'custom', path: [], message: `${ids.length} blocks, more than the limit of ${MAX_BLOCKS}` })
        for (const id of ids)
          if (!BLOCK_ID.test(id))
            ctx.addIssue({ code: 'custom', path: [id], message: `"${id}" is not a block id: start with a letter and use letters, digits, _ and - only` })
      }),
    structure: structureSchema,
    delay_approximation: z
      .object({
        method: z.literal('pade', { errorMap: () => ({ message: 'the delay approximation method is "pade"' }) }).default('pade'),
        order: z
          .number({ invalid_type_error: 'The Padé order must be a whole number' })
          .int('The Padé order must be a whole number')
          .min(1, 'The Padé order is at least 1')
          .max(MAX_PADE_ORDER, `The Padé order is at most ${MAX_PADE_ORDER}`)
          .default(2),
      })
      .default({}),
    analysis: z
      .object({
        stability_range: z
          .object({
            parameter: storable(z.string({ required_error: 'Choose the parameter to sweep' }).max(60)),
            search: z.tuple([finite('lower end'), finite('upper end')]).refine(([lo, hi]) => lo < hi, 'the lower end of the search is below the upper end'),
          })
          .optional(),
      })
      .default({}),
    criteria: z
      .record(recordKey, criterionSchema)
      .default({})
      .superRefine((criteria, ctx) => {
        for (const [name, c] of Object.entries(criteria)) {
          const bound = criterionBounds[name as CriterionName]
          if (!bound) {
            ctx.addIssue({ code: 'custom', path: [name], message: `"${name}" is not a known criterion (known: ${Object.keys(criterionBounds).join(', ')})` })
            continue
          }
          const other = bound === 'min' ? 'max' : 'min'
          if (c[other] !== undefined) ctx.addIssue({ code: 'custom', path: [name, other], message: `${name} takes a ${bound} limit, not a ${other}` })
          else if (c[bound] === undefined) ctx.addIssue({ code: 'custom', path: [name, bound], message: `enter the ${bound} limit of ${name}` })
        }
      }),
  })
  .superRefine((loop, ctx) => {
    checkNode(loop.structure, ['structure'], new Set(Object.keys(loop.blocks ?? {})), ctx)
    const range = loop.analysis?.stability_range
    if (range && loop.parameters && !(range.parameter in loop.parameters))
      ctx.addIssue({ code: 'custom', path: ['analysis', 'stability_range', 'parameter'], message: `"${range.parameter}" is not a defined parameter` })
  })

export type LoopFile = z.infer<typeof loopFileSchema>
/** The loop file as written, before defaults are filled in. */
export type LoopFileInput = z.input<typeof loopFileSchema>

// The sheet editor's form: the sheet document (shared/schemas/sheet.ts) as rows of text fields, so a half-typed
// number ("1.", "-") is kept exactly as typed and a conflict compares what the engineer sees. One way back to the
// document, `documentOfForm`, which the autosave and the live engine both use; issues of the shared schema are
// mapped back to the form's field paths so each message shows at its field.
import type { StructureNode } from '#shared/schemas/loop'
import { blockRoles, criterionBounds, type CriterionName } from '#shared/schemas/loop'
import { sheetDocumentSchema, type SheetDocument, type SheetDocumentInput } from '#shared/schemas/sheet'

export type BlockRole = (typeof blockRoles)[number]

export interface FormParameter {
  symbol: string
  description: string
  value: string
  unit: string
  min: string
  max: string
  source: string
  tex: string
}

export interface FormBlock {
  id: string
  role: BlockRole
  label: string
  num: string
  den: string
  delay: string
}

export interface FormReference {
  title: string
  identifier: string
  note: string
}

export interface SheetForm {
  title: string
  loopTag: string
  parameters: FormParameter[]
  blocks: FormBlock[]
  structure: StructureNode
  padeOrder: string
  rangeParameter: string
  rangeLow: string
  rangeHigh: string
  criteria: Record<CriterionName, string>
  scope: string
  references: FormReference[]
  assumptions: string[]
  conclusions: string
  safetyNotes: string[]
}

export const criterionOrder = Object.keys(criterionBounds) as CriterionName[]

/** A plain deep copy of form data: the form's values are reactive proxies, which structuredClone refuses. */
export const plainCopy = <T>(value: T): T => JSON.parse(JSON.stringify(value)) as T

const text = (value: number | undefined) => (value === undefined ? '' : String(value))

export function formOfDocument(document: SheetDocumentInput, title: string, loopTag: string): SheetForm {
  const loop = document.loop
  const parameters = loop.parameters ?? {}
  const details = document.parameters ?? []
  const symbols = [...details.map((d) => d.symbol), ...Object.keys(parameters).filter((s) => !details.some((d) => d.symbol === s))]
  const blocks = loop.blocks ?? {}
  const order = [...(document.blockOrder ?? []), ...Object.keys(blocks).filter((id) => !(document.blockOrder ?? []).includes(id))]
  const range = loop.analysis?.stability_range
  const criteria = {} as Record<CriterionName, string>
  for (const name of criterionOrder) {
    const limit = loop.criteria?.[name]
    criteria[name] = text(limit?.[criterionBounds[name]])
  }
  return {
    title,
    loopTag,
    parameters: symbols.filter((s) => parameters[s]).map((symbol) => {
      const p = parameters[symbol]!
      const detail = details.find((d) => d.symbol === symbol)
      return { symbol, description: detail?.description ?? '', value: text(p.value), unit: p.unit ?? '', min: text(p.min), max: text(p.max), source: detail?.source || p.note || '', tex: p.tex ?? '' }
    }),
    blocks: order.filter((id) => blocks[id]).map((id) => {
      const b = blocks[id]!
      return { id, role: b.role, label: b.label ?? '', num: b.num, den: b.den ?? '1', delay: b.delay ?? '' }
    }),
    structure: plainCopy(loop.structure) as StructureNode,
    padeOrder: text(loop.delay_approximation?.order ?? 2),
    rangeParameter: range?.parameter ?? '',
    rangeLow: text(range?.search[0]),
    rangeHigh: text(range?.search[1]),
    criteria,
    scope: document.scope ?? '',
    references: (document.references ?? []).map((r) => ({ title: r.title, identifier: r.identifier ?? '', note: r.note ?? '' })),
    assumptions: [...(document.assumptions ?? [])],
    conclusions: document.conclusions ?? '',
    safetyNotes: [...(document.safetyNotes ?? [])],
  }
}

const NUMBER = /^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$/

/** A field's number, or its message when the text is no number. */
function readNumber(value: string, what: string, required: boolean): { value?: number; problem?: string } {
  const trimmed = value.trim()
  if (!trimmed) return required ? { problem: `Enter the ${what}` } : {}
  if (!NUMBER.test(trimmed)) return { problem: `"${trimmed}" is not a number` }
  const number = Number(trimmed)
  return Number.isFinite(number) ? { value: number } : { problem: `"${trimmed}" is too large` }
}

export interface FormReading {
  /** The document as the form stands; numbers that do not read are left out (and named in `problems`). */
  document: SheetDocumentInput
  /** Form path → message, from the number fields and from the shared schema. */
  problems: Record<string, string>
  /** The document the shared schema accepts, or null. */
  valid: SheetDocument | null
}

export function documentOfForm(form: SheetForm): FormReading {
  const problems: Record<string, string> = {}
  const parameters: Record<string, Record<string, unknown>> = {}
  form.parameters.forEach((p, i) => {
    const entry: Record<string, unknown> = {}
    for (const [key, what, required] of [['value', 'value', true], ['min', 'minimum', false], ['max', 'maximum', false]] as const) {
      const read = readNumber(p[key], what, required)
      if (read.problem) problems[`parameters[${i}].${key}`] = read.problem
      if (read.value !== undefined) entry[key] = read.value
    }
    if (entry.value === undefined) entry.value = Number.NaN
    if (p.unit.trim()) entry.unit = p.unit.trim()
    if (p.tex.trim()) entry.tex = p.tex.trim()
    if (p.source.trim()) entry.note = p.source.trim()
    if (p.symbol in parameters) problems[`parameters[${i}].symbol`] = `"${p.symbol}" is listed twice`
    parameters[p.symbol] = entry
  })
  const blocks: Record<string, Record<string, unknown>> = {}
  form.blocks.forEach((b, i) => {
    if (b.id in blocks) problems[`blocks[${i}].id`] = `"${b.id}" is used by two blocks`
    blocks[b.id] = { role: b.role, ...(b.label.trim() ? { label: b.label.trim() } : {}), num: b.num, den: b.den.trim() ? b.den : '1', ...(b.delay.trim() ? { delay: b.delay } : {}) }
  })
  const criteria: Record<string, Record<string, number>> = {}
  for (const name of criterionOrder) {
    const read = readNumber(form.criteria[name] ?? '', 'limit', false)
    if (read.problem) problems[`criteria.${name}`] = read.problem
    else if (read.value !== undefined) criteria[name] = { [criterionBounds[name]]: read.value }
  }
  const pade = readNumber(form.padeOrder, 'Padé order', true)
  if (pade.problem) problems.padeOrder = pade.problem
  const analysis: Record<string, unknown> = {}
  if (form.rangeParameter) {
    const low = readNumber(form.rangeLow, 'lower end', true)
    const high = readNumber(form.rangeHigh, 'upper end', true)
    if (low.problem) problems.rangeLow = low.problem
    if (high.problem) problems.rangeHigh = high.problem
    analysis.stability_range = { parameter: form.rangeParameter, search: [low.value ?? Number.NaN, high.value ?? Number.NaN] }
  }
  const document = {
    loop: {
      title: form.title.trim() || undefined,
      parameters,
      blocks,
      structure: plainCopy(form.structure),
      delay_approximation: { method: 'pade', order: pade.value ?? 2 },
      analysis,
      criteria,
    },
    parameters: form.parameters.map((p) => ({ symbol: p.symbol, description: p.description, source: p.source })),
    blockOrder: form.blocks.map((b) => b.id),
    scope: form.scope,
    references: form.references.map((r) => ({ title: r.title, ...(r.identifier.trim() ? { identifier: r.identifier } : {}), ...(r.note.trim() ? { note: r.note } : {}) })),
    assumptions: [...form.assumptions],
    conclusions: form.conclusions,
    safetyNotes: [...form.safetyNotes],
  } as SheetDocumentInput
  const parsed = sheetDocumentSchema.safeParse(document)
  if (!parsed.success)
    for (const issue of parsed.error.issues) {
      const at = formPathOf(form, issue.path.map(String))
      if (!(at in problems)) problems[at] = issue.message
    }
  return { document, problems, valid: parsed.success && Object.keys(problems).length === 0 ? parsed.data : null }
}

/**
 * The form's field for a path of the sheet document (`loop.blocks.P.den`) or of the loop file as the engine names
 * it (`blocks.P.den`): `blocks[1].den`.
 */
export function formPathOf(form: SheetForm, path: string[]): string {
  const [head, ...rest] = path
  if (head === 'loop') return loopPathOf(form, rest)
  if (head === 'parameters' && rest.length >= 1) return `parameters[${rest[0]}]${rest[1] ? `.${rest[1]}` : '.symbol'}`
  if (head === 'blockOrder') return rest.length ? `blocks[${rest[0]}].id` : 'blocks'
  if ((head === 'references' || head === 'assumptions' || head === 'safetyNotes') && rest.length)
    return `${head}[${rest[0]}]${rest[1] ? `.${rest[1]}` : ''}`
  return head ?? 'document'
}

export function loopPathOf(form: SheetForm, path: string[]): string {
  const [head, key, field] = path
  if (head === 'parameters') {
    const i = form.parameters.findIndex((p) => p.symbol === key)
    if (i < 0) return 'parameters'
    return `parameters[${i}].${field === 'note' ? 'source' : field ?? 'symbol'}`
  }
  if (head === 'blocks') {
    const i = form.blocks.findIndex((b) => b.id === key)
    if (i < 0) return 'blocks'
    return `blocks[${i}].${field ?? 'id'}`
  }
  if (head === 'structure') return 'structure'
  if (head === 'delay_approximation') return 'padeOrder'
  if (head === 'analysis') return path.includes('search') ? (path.at(-1) === '1' ? 'rangeHigh' : 'rangeLow') : 'rangeParameter'
  if (head === 'criteria') return key ? `criteria.${key}` : 'criteria'
  if (head === 'title') return 'title'
  return head ?? 'document'
}

/** The loop file path of the engine's message (`blocks.P.den`) as the form's field path. */
export function formPathOfEngineField(form: SheetForm, field: string | null): string | null {
  if (!field || field === 'file') return null
  return loopPathOf(form, field.split('.'))
}

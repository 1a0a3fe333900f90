// The differences between two sheet documents and between two results (issue 8, items 5 and 6), computed from
// what is stored. Inputs are compared as the engineer wrote them; results through the app's one number formatter
// (app/utils/format.ts, style.md "One way through") at the sheet's 4 significant figures, so a figure differs when
// the sheet would print it differently, and a difference within rounding is none.
import { diffWords } from 'diff'
import type { CalcResult } from '../../shared/calc'
import type { StructureNode as LoopNode } from '../../shared/schemas/loop'
import type { SheetDocument } from '../../shared/schemas/sheet'
import type { FieldChange, ItemChange, ResultChange, TextChange } from '../../shared/schemas/revisions'
import { formatNumber } from '../../app/utils/format'
import { criterionNames } from '../../app/utils/criterionNames'

const shown = (value: unknown): string | null => (value === undefined || value === null || value === '' ? null : typeof value === 'string' ? value : JSON.stringify(value))

function fieldChanges(fields: string[], before: Record<string, unknown> | undefined, after: Record<string, unknown> | undefined): FieldChange[] {
  const changes: FieldChange[] = []
  for (const field of fields) {
    const b = shown(before?.[field])
    const a = shown(after?.[field])
    if (b !== a) changes.push({ field, before: b, after: a })
  }
  return changes
}

function itemChanges(keys: { before: string[]; after: string[] }, fields: string[], of: (side: 'before' | 'after', key: string) => Record<string, unknown> | undefined): ItemChange[] {
  const all = [...keys.before, ...keys.after.filter((key) => !keys.before.includes(key))]
  const changes: ItemChange[] = []
  for (const key of all) {
    const b = keys.before.includes(key) ? of('before', key) : undefined
    const a = keys.after.includes(key) ? of('after', key) : undefined
    const fieldsChanged = fieldChanges(fields, b, a)
    if (!b) changes.push({ key, change: 'added', fields: fieldsChanged })
    else if (!a) changes.push({ key, change: 'removed', fields: fieldsChanged })
    else if (fieldsChanged.length) changes.push({ key, change: 'changed', fields: fieldsChanged })
  }
  return changes
}

/** The loop's structure as one line: `feedback(forward: series(C, P), return: unity, sign −)`. */
export function structureText(node: LoopNode | null | undefined): string {
  if (node === null || node === undefined) return 'unity'
  if (typeof node === 'string') return node
  if ('series' in node) return `series(${node.series.map(structureText).join(', ')})`
  if ('parallel' in node) {
    const signs = node.signs ?? node.parallel.map(() => 1)
    return `parallel(${node.parallel.map((path, i) => `${(signs[i] ?? 1) < 0 ? '−' : '+'}${structureText(path)}`).join(', ')})`
  }
  const loop = node.feedback
  return `feedback(forward: ${structureText(loop.forward)}, return: ${structureText(loop.return)}, sign ${(loop.sign ?? -1) < 0 ? '−' : '+'})`
}

const textSections: Array<{ section: string; label: string; read: (d: SheetDocument) => string }> = [
  { section: 'title', label: 'Title', read: (d) => d.loop.title ?? '' },
  { section: 'scope', label: 'Purpose and scope', read: (d) => d.scope },
  { section: 'references', label: 'References', read: (d) => d.references.map((r) => [r.title, r.identifier, r.note].filter(Boolean).join(' · ')).join('\n') },
  { section: 'assumptions', label: 'Assumptions', read: (d) => d.assumptions.join('\n') },
  { section: 'safety', label: 'Safety notes', read: (d) => d.safetyNotes.join('\n') },
  { section: 'conclusions', label: 'Conclusions', read: (d) => d.conclusions },
]

export interface DocumentDiff {
  parameters: ItemChange[]
  blocks: ItemChange[]
  blockOrder: FieldChange | null
  structure: FieldChange[]
  criteria: ItemChange[]
  text: TextChange[]
}

export function diffDocuments(before: SheetDocument, after: SheetDocument): DocumentDiff {
  const parameterOf = (document: SheetDocument, symbol: string) => {
    const detail = document.parameters.find((p) => p.symbol === symbol)
    return { ...document.loop.parameters[symbol], description: detail?.description, source: detail?.source }
  }
  const parameters = itemChanges(
    { before: before.parameters.map((p) => p.symbol), after: after.parameters.map((p) => p.symbol) },
    ['value', 'unit', 'min', 'max', 'tex', 'description', 'source', 'note'],
    (side, symbol) => parameterOf(side === 'before' ? before : after, symbol),
  )
  const blocks = itemChanges(
    { before: before.blockOrder, after: after.blockOrder },
    ['role', 'label', 'num', 'den', 'delay'],
    (side, id) => (side === 'before' ? before : after).loop.blocks[id] as Record<string, unknown> | undefined,
  )
  const sameSet = before.blockOrder.length === after.blockOrder.length && before.blockOrder.every((id) => after.blockOrder.includes(id))
  const blockOrder = sameSet && before.blockOrder.join(',') !== after.blockOrder.join(',') ? { field: 'blockOrder', before: before.blockOrder.join(', '), after: after.blockOrder.join(', ') } : null

  const structure: FieldChange[] = []
  const sb = structureText(before.loop.structure)
  const sa = structureText(after.loop.structure)
  if (sb !== sa) structure.push({ field: 'structure', before: sb, after: sa })
  const pade = (d: SheetDocument) => (d.loop.delay_approximation ? `Padé order ${d.loop.delay_approximation.order}` : null)
  if (pade(before) !== pade(after)) structure.push({ field: 'delay_approximation', before: pade(before), after: pade(after) })
  const range = (d: SheetDocument) => {
    const r = d.loop.analysis?.stability_range
    return r ? `${r.parameter} over [${r.search.join(', ')}]` : null
  }
  if (range(before) !== range(after)) structure.push({ field: 'analysis.stability_range', before: range(before), after: range(after) })

  const criteria = itemChanges(
    { before: Object.keys(before.loop.criteria ?? {}), after: Object.keys(after.loop.criteria ?? {}) },
    ['min', 'max'],
    (side, name) => ((side === 'before' ? before : after).loop.criteria as Record<string, Record<string, unknown>> | undefined)?.[name],
  )

  const text: TextChange[] = []
  for (const { section, label, read } of textSections) {
    const b = read(before)
    const a = read(after)
    if (b !== a) text.push({ section, label, before: b, after: a, parts: diffWords(b, a).map(({ value, added, removed }) => ({ value, ...(added ? { added } : {}), ...(removed ? { removed } : {}) })) })
  }
  return { parameters, blocks, blockOrder, structure, criteria, text }
}

// ---------------------------------------------------------------------------------------------------------------
// Results

const figure = (value: number | null | undefined, unit?: string) => formatNumber(value, { unit })
const complexText = (root: { re: number; im: number }) =>
  root.im === 0 ? figure(root.re) : `${figure(root.re)} ${root.im < 0 ? '−' : '+'} ${formatNumber(Math.abs(root.im))}j`
const rootsText = (roots: Array<{ re: number; im: number }> | undefined) =>
  roots && roots.length ? [...roots].sort((a, b) => a.re - b.re || a.im - b.im).map(complexText).join(', ') : 'none'

/** The figures and verdicts of a result that a difference is looked for in, each as the sheet prints it. */
function readings(result: CalcResult): Array<{ kind: 'figure' | 'verdict'; quantity: string; label: string; text: string }> {
  const list: Array<{ kind: 'figure' | 'verdict'; quantity: string; label: string; text: string }> = []
  const add = (kind: 'figure' | 'verdict', quantity: string, label: string, text: string) => list.push({ kind, quantity, label, text })
  add('verdict', 'stability', 'Stability', result.stability)
  add('figure', 'order', 'Order of T(s)', `${result.order?.num} / ${result.order?.den}`)
  add('figure', 'closed_loop.den', 'Closed-loop denominator', (result.closed_loop?.den ?? []).map((c) => figure(c)).join(', '))
  add('figure', 'closed_loop.num', 'Closed-loop numerator', (result.closed_loop?.num ?? []).map((c) => figure(c)).join(', '))
  add('figure', 'poles', 'Poles', rootsText(result.poles))
  add('figure', 'zeros', 'Zeros', rootsText(result.zeros))
  add('figure', 'routh.sign_changes', 'Sign changes in the Routh array', String(result.routh?.sign_changes))
  add('figure', 'dc_gain', 'DC gain', figure(result.dc_gain))
  add('figure', 'steady_state_error.step', 'Steady-state error, step', figure(result.steady_state_error?.step))
  add('figure', 'steady_state_error.ramp', 'Steady-state error, ramp', figure(result.steady_state_error?.ramp))
  add('figure', 'margins.gain_margin_db', 'Gain margin', figure(result.margins?.gain_margin_db, 'dB'))
  add('figure', 'margins.phase_crossover_rad_s', 'Phase crossover', figure(result.margins?.phase_crossover_rad_s, 'rad/s'))
  add('figure', 'margins.phase_margin_deg', 'Phase margin', figure(result.margins?.phase_margin_deg, '°'))
  add('figure', 'margins.gain_crossover_rad_s', 'Gain crossover', figure(result.margins?.gain_crossover_rad_s, 'rad/s'))
  add('figure', 'step.overshoot_pct', 'Overshoot', figure(result.step?.overshoot_pct, '%'))
  add('figure', 'step.peak_time_s', 'Peak time', figure(result.step?.peak_time_s, 's'))
  add('figure', 'step.rise_time_s', 'Rise time', figure(result.step?.rise_time_s, 's'))
  add('figure', 'step.settling_time_s', 'Settling time', figure(result.step?.settling_time_s, 's'))
  add('figure', 'step.final_value', 'Final value', figure(result.step?.final_value))
  const intervals = result.stability_range?.intervals
  add('figure', 'stability_range', 'Stable range', intervals ? intervals.map(([lo, hi]) => `[${figure(lo)}, ${figure(hi)}]`).join(', ') || 'none' : 'not asked')
  add('verdict', 'tolerance_corners.all_stable', 'Every tolerance corner stable', result.tolerance_corners ? (result.tolerance_corners.all_stable ? 'yes' : 'no') : 'none')
  for (const row of result.criteria ?? []) {
    // The criterion in the words and unit of the sheet's own criteria table.
    const named = criterionNames[row.name as keyof typeof criterionNames]
    const label = `Criterion: ${named?.label ?? row.name}`
    add('figure', `criteria.${row.name}.value`, label, figure(row.value, named?.unit || undefined))
    add('verdict', `criteria.${row.name}.pass`, `${label}, verdict`, row.pass ? 'pass' : 'fail')
  }
  return list
}

/** What differs between two results; null stands for "no result" (the engine refused the document at that save). */
export function diffResults(before: CalcResult | null, after: CalcResult | null): ResultChange[] {
  if (!before || !after) {
    if (!before && !after) return []
    return [{ kind: 'result', quantity: 'result', label: 'Result', before: before ? 'computed' : 'none', after: after ? 'computed' : 'none' }]
  }
  const changes: ResultChange[] = []
  const was = new Map(readings(before).map((r) => [r.quantity, r]))
  const now = readings(after)
  for (const reading of now) {
    const old = was.get(reading.quantity)
    if (!old) changes.push({ kind: reading.kind, quantity: reading.quantity, label: reading.label, before: null, after: reading.text })
    else if (old.text !== reading.text) changes.push({ kind: reading.kind, quantity: reading.quantity, label: reading.label, before: old.text, after: reading.text })
    was.delete(reading.quantity)
  }
  for (const old of was.values()) changes.push({ kind: old.kind, quantity: old.quantity, label: old.label, before: old.text, after: null })
  const warningsBefore = before.warnings ?? []
  const warningsAfter = after.warnings ?? []
  for (const sentence of warningsBefore) if (!warningsAfter.includes(sentence)) changes.push({ kind: 'warning', quantity: 'warnings', label: 'Warning', before: sentence, after: null })
  for (const sentence of warningsAfter) if (!warningsBefore.includes(sentence)) changes.push({ kind: 'warning', quantity: 'warnings', label: 'Warning', before: null, after: sentence })
  return changes
}

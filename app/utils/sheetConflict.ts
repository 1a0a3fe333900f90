// A stale save (409) set side by side: the engineer's unsaved form and the newer stored one, field by field (a
// text, a criterion, or one row of a table or list). Where only one side changed a field since the editor last
// loaded or saved, that side is chosen to begin with; the engineer confirms or changes every choice, and the
// merged form keeps each chosen value whole, so no character of either side is lost without a choice.
import { criterionNames } from './criterionNames'
import { criterionOrder, plainCopy, type SheetForm } from './sheetForm'
import { structureText } from './structureTree'

export interface ConflictUnit {
  key: string
  label: string
  mine: string
  stored: string
  /** The side chosen to begin with: the one that changed since the last load or save. */
  proposed: 'mine' | 'stored'
}

type ListKey = 'parameters' | 'blocks' | 'references' | 'assumptions' | 'safetyNotes'
const lists: Array<{ key: ListKey; label: string }> = [
  { key: 'parameters', label: 'Parameter' },
  { key: 'blocks', label: 'Block' },
  { key: 'references', label: 'Reference' },
  { key: 'assumptions', label: 'Assumption' },
  { key: 'safetyNotes', label: 'Safety note' },
]
const scalars: Array<{ key: 'title' | 'loopTag' | 'scope' | 'conclusions' | 'padeOrder' | 'rangeParameter' | 'rangeLow' | 'rangeHigh' | 'structure'; label: string }> = [
  { key: 'title', label: 'Title' },
  { key: 'loopTag', label: 'Loop tag' },
  { key: 'scope', label: 'Purpose and scope' },
  { key: 'structure', label: 'Loop structure' },
  { key: 'padeOrder', label: 'Padé order' },
  { key: 'rangeParameter', label: 'Stable range of' },
  { key: 'rangeLow', label: 'Stable range searched from' },
  { key: 'rangeHigh', label: 'Stable range searched to' },
  { key: 'conclusions', label: 'Conclusions' },
]

function rowText(list: ListKey, row: unknown): string {
  if (row === undefined) return '(no row)'
  if (typeof row === 'string') return row
  const r = row as Record<string, string>
  if (list === 'parameters')
    return `${r.symbol} = ${r.value} ${r.unit}`.trim() + (r.min || r.max ? `, band ${r.min || '…'} to ${r.max || '…'}` : '') + (r.description ? `; ${r.description}` : '') + (r.source ? `; source: ${r.source}` : '') + (r.tex ? `; TeX ${r.tex}` : '')
  if (list === 'blocks') return `${r.id} (${r.role}${r.label ? `, ${r.label}` : ''}): (${r.num}) / (${r.den})${r.delay ? `, dead time ${r.delay}` : ''}`
  return [r.title, r.identifier, r.note].filter(Boolean).join(' · ')
}

const same = (a: unknown, b: unknown) => JSON.stringify(a ?? null) === JSON.stringify(b ?? null)

export function conflictUnits(mine: SheetForm, stored: SheetForm, base: SheetForm | null): ConflictUnit[] {
  const units: ConflictUnit[] = []
  const propose = (mineValue: unknown, baseValue: unknown) => (base !== null && same(mineValue, baseValue) ? 'stored' : 'mine')
  for (const { key, label } of scalars) {
    if (same(mine[key], stored[key])) continue
    const show = (form: SheetForm) => (key === 'structure' ? structureText(form.structure) : String(form[key]))
    units.push({ key, label, mine: show(mine), stored: show(stored), proposed: propose(mine[key], base?.[key]) })
  }
  for (const name of criterionOrder) {
    if (same(mine.criteria[name], stored.criteria[name])) continue
    units.push({ key: `criteria.${name}`, label: `Criterion: ${criterionNames[name].label}`, mine: mine.criteria[name] || '(no limit)', stored: stored.criteria[name] || '(no limit)', proposed: propose(mine.criteria[name], base?.criteria[name]) })
  }
  for (const { key, label } of lists) {
    const length = Math.max(mine[key].length, stored[key].length)
    for (let i = 0; i < length; i++) {
      const a = mine[key][i]
      const b = stored[key][i]
      if (same(a, b)) continue
      units.push({ key: `${key}[${i}]`, label: `${label} ${i + 1}`, mine: rowText(key, a), stored: rowText(key, b), proposed: propose(a, base?.[key][i]) })
    }
  }
  return units
}

/** The engineer's form with the units chosen from the stored side taken from it. */
export function mergeForms(mine: SheetForm, stored: SheetForm, takeStored: ReadonlySet<string>): SheetForm {
  const merged = plainCopy(mine)
  const copy = <T>(value: T): T => (value === undefined ? value : plainCopy(value))
  for (const { key } of scalars) if (takeStored.has(key)) (merged as unknown as Record<string, unknown>)[key] = copy(stored[key])
  for (const name of criterionOrder) if (takeStored.has(`criteria.${name}`)) merged.criteria[name] = stored.criteria[name]
  for (const { key } of lists) {
    const length = Math.max(mine[key].length, stored[key].length)
    const rows: unknown[] = []
    for (let i = 0; i < length; i++) rows.push(takeStored.has(`${key}[${i}]`) ? copy(stored[key][i]) : copy(mine[key][i]))
    ;(merged as unknown as Record<string, unknown[]>)[key] = rows.filter((row) => row !== undefined)
  }
  return merged
}

import { z } from 'zod'
import { storable } from './text'

/** GET/PATCH /api/firm: firm settings (product.md: admin). */
export const firmSettingsSchema = z.object({
  name: storable(z.string().trim().min(2, 'A name has at least 2 characters').max(160)),
  /** Sheet numbering pattern: {project} and {seq} are replaced, e.g. "{project}-{seq:02}". */
  sheetNumbering: storable(z.string().trim().min(1).max(80)),
  paperSize: z.enum(['A4', 'Letter', 'A3']),
  defaultCautions: z.array(storable(z.string().trim().min(1).max(600))).max(20),
  /** How an issued revision is labelled (`nextRevisionLabel`); a body without it keeps the default rule. */
  revisionLabelRule: z.enum(['letters-then-numbers', 'letters', 'numbers']).default('letters-then-numbers'),
})
export type FirmSettings = z.infer<typeof firmSettingsSchema>

/**
 * A sheet number by the firm's pattern: `{project}` is the project number, `{seq}` the sheet's sequence in the
 * project, `{seq:NN}` the same padded with zeros to NN digits. A pattern without `{seq}` gets `-{seq}` at its end,
 * so numbers stay unique in the project.
 */
export function formatSheetNumber(pattern: string, projectNumber: string, seq: number): string {
  const withSeq = /\{seq(?::\d+)?\}/.test(pattern) ? pattern : `${pattern}-{seq}`
  return withSeq
    .replaceAll('{project}', projectNumber)
    .replace(/\{seq(?::(\d+))?\}/g, (_match, width?: string) => String(seq).padStart(Math.min(Number(width ?? 1), 12), '0'))
}

export type RevisionLabelRule = FirmSettings['revisionLabelRule']

/** The rules in words, for the firm page and DEVELOPERS.md. */
export const revisionLabelRuleNames: Record<RevisionLabelRule, string> = {
  'letters-then-numbers': 'A, B, C… until the first issue for implementation, then 0, 1, 2…',
  letters: 'A, B, C… for every issue',
  numbers: '0, 1, 2… for every issue',
}

/** 0 → A, 25 → Z, 26 → AA, 27 → AB… */
function letterLabel(n: number): string {
  let label = ''
  for (let rest = n + 1; rest > 0; rest = Math.floor((rest - 1) / 26)) label = String.fromCharCode(65 + ((rest - 1) % 26)) + label
  return label
}

/**
 * The label of a sheet's next issued revision by the firm's rule, from the labels of its earlier issues. Under the
 * default rule the letters run until the first issue for implementation, and numbers from then on (a sheet once
 * numbered stays numbered, whatever the purpose of a later issue). Labels are counted, not parsed, so a rule
 * changed between issues carries on from the issues of its own kind.
 */
export function nextRevisionLabel(rule: RevisionLabelRule, earlier: Array<{ label: string }>, purpose: string): string {
  const numbered = earlier.filter((issue) => /^[0-9]+$/.test(issue.label)).length
  const lettered = earlier.filter((issue) => /^[A-Z]+$/.test(issue.label)).length
  const useNumbers = rule === 'numbers' || (rule === 'letters-then-numbers' && (purpose === 'implementation' || numbered > 0))
  return useNumbers ? String(numbered) : letterLabel(lettered)
}

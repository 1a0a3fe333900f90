import { z } from 'zod'
import { storable } from './text'

/** GET/PATCH /api/firm: firm settings (product.md: admin). */
export const firmSettingsSchema = z.object({
  name: storable(z.string().trim().min(2, 'A name has at least 2 characters').max(160)),
  /** Sheet numbering pattern: {project} and {seq} are replaced, e.g. "{project}-{seq:02}". */
  sheetNumbering: storable(z.string().trim().min(1).max(80)),
  paperSize: z.enum(['A4', 'Letter', 'A3']),
  defaultCautions: z.array(storable(z.string().trim().min(1).max(600))).max(20),
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

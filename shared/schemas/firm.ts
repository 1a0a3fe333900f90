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

// The firm's settings (product.md: firm name, sheet numbering, paper size, default cautions); one row.
import { eq } from 'drizzle-orm'
import { createError } from 'h3'
import { firmSettings } from '../db/schema'
import type { Database } from '../utils/db'
import type { FirmSettings } from '../../shared/schemas/firm'
import type { AuditContext } from './audit-trail'
import { audited, type Executor } from './audited'

function toSettings(row: typeof firmSettings.$inferSelect): FirmSettings {
  return {
    name: row.name,
    sheetNumbering: row.sheetNumbering,
    paperSize: row.paperSize as FirmSettings['paperSize'],
    defaultCautions: row.defaultCautions,
    revisionLabelRule: row.revisionLabelRule as FirmSettings['revisionLabelRule'],
  }
}

export async function readFirmSettings(db: Executor): Promise<FirmSettings> {
  const [row] = await db.select().from(firmSettings).where(eq(firmSettings.id, 1))
  if (!row) throw createError({ statusCode: 404, statusMessage: 'The firm settings are not set up yet; run the seed' })
  return toSettings(row)
}

export async function updateFirmSettings(db: Database, body: FirmSettings, context: AuditContext): Promise<FirmSettings> {
  const { row } = await audited(
    db,
    context,
    ({ before }: { before: FirmSettings }) => ({ action: 'firm.updated', subjectType: 'firm', subjectId: 1, detail: { before, after: body } }),
    async (tx) => {
      // Read and written under one row lock, so the "before" of the record is the row this change replaced.
      const [locked] = await tx.select().from(firmSettings).where(eq(firmSettings.id, 1)).for('update')
      if (!locked) throw createError({ statusCode: 404, statusMessage: 'The firm settings are not set up yet; run the seed' })
      const [row] = await tx
        .update(firmSettings)
        .set({ ...body, updatedAt: new Date() })
        .where(eq(firmSettings.id, 1))
        .returning()
      return { before: toSettings(locked), row: row! }
    },
  )
  return toSettings(row)
}

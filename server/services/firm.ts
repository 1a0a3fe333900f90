// The firm's settings (product.md: firm name, sheet numbering, paper size, default cautions); one row.
import { eq } from 'drizzle-orm'
import { createError } from 'h3'
import { firmSettings } from '../db/schema'
import type { Database } from '../utils/db'
import type { FirmSettings } from '../../shared/schemas/firm'
import { recordAuditEvent, type AuditContext } from './audit-trail'

function toSettings(row: typeof firmSettings.$inferSelect): FirmSettings {
  return {
    name: row.name,
    sheetNumbering: row.sheetNumbering,
    paperSize: row.paperSize as FirmSettings['paperSize'],
    defaultCautions: row.defaultCautions,
  }
}

export async function readFirmSettings(db: Database): Promise<FirmSettings> {
  const [row] = await db.select().from(firmSettings).where(eq(firmSettings.id, 1))
  if (!row) throw createError({ statusCode: 404, statusMessage: 'The firm settings are not set up yet; run the seed' })
  return toSettings(row)
}

export async function updateFirmSettings(db: Database, body: FirmSettings, context: AuditContext): Promise<FirmSettings> {
  const before = await readFirmSettings(db)
  const [row] = await db
    .update(firmSettings)
    .set({ ...body, updatedAt: new Date() })
    .where(eq(firmSettings.id, 1))
    .returning()
  await recordAuditEvent(db, context, { action: 'firm.updated', subjectType: 'firm', subjectId: 1, detail: { before, after: body } })
  return toSettings(row!)
}

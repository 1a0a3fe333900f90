import { z } from 'zod'
import { listQuerySchema } from './lists'
import { storable } from './text'

/** GET /api/audit */
export const auditQuerySchema = listQuerySchema(['at'] as const)

/** One row of GET /api/audit: one event of the append-only audit trail. */
export interface AuditRow {
  id: number
  at: string
  actorId: number | null
  actorName: string | null
  actorEmail: string | null
  /** e.g. `sign-in.failed`, `access.refused`, `person.invited`, `project.member-added` */
  action: string
  subjectType: string | null
  subjectId: string | null
  /** The HTTP status of a refusal (401, 403, 429); null for events that are not refusals. */
  status: number | null
  method: string | null
  path: string | null
  ip: string | null
  detail: Record<string, unknown>
}

/**
 * POST /api/audit/page-refusals: the screen reports a page it refused to open (app/middleware/role.ts).
 * The roles are not the screen's to claim: the server records those of the session.
 */
export const pageRefusalSchema = z.object({
  page: storable(z.string().trim().min(1).max(300).startsWith('/')),
})

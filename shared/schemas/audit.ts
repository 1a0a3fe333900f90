import { z } from 'zod'
import { listQuerySchema } from './lists'
import { idText, storable } from './text'

/**
 * GET /api/audit: the list query, and the admins' filters (issue 8, item 11): the project and the sheet an event
 * happened on, the person who acted, the action (exact, e.g. `access.refused`). Each is one value, given once.
 */
export const auditQuerySchema = listQuerySchema(['at'] as const).extend({
  projectId: idText.optional(),
  sheetId: idText.optional(),
  personId: idText.optional(),
  action: storable(z.string({ invalid_type_error: 'Choose one action' }).trim().min(1).max(100)).optional(),
})
export type AuditQuery = z.output<typeof auditQuerySchema>

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
  /** The client address the request came from (the connection's: DEVELOPERS.md, "The session"). */
  ip: string | null
  detail: Record<string, unknown>
  /** The project and sheet the event happened on, when it happened on one (filled by the database on insert). */
  projectId: number | null
  projectNumber: string | null
  sheetId: number | null
  sheetNumber: string | null
}

/** GET /api/audit/actions: every action the trail holds, for the filter's choices. */
export type AuditActions = string[]

/**
 * POST /api/audit/page-refusals: the screen reports a page it refused to open (app/middleware/role.ts).
 * The roles are not the screen's to claim: the server records those of the session.
 */
export const pageRefusalSchema = z.object({
  page: storable(z.string().trim().min(1).max(300).startsWith('/')),
})

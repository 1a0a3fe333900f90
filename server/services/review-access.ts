// Who may review a revision: the reading and checking rights the comment, history, diff and recomputation routes
// share (product.md, "Who uses it"; issue 8, item 1: nobody checks a revision they prepared or edited).
import { and, eq, sql } from 'drizzle-orm'
import { createError } from 'h3'
import { auditEvents, projectMembers, revisionEditors, sheetRevisions, sheets } from '../db/schema'
import type { ProjectRole } from '../../shared/schemas/roles'
import type { SheetStatus } from '../../shared/schemas/sheet'
import type { Executor } from './audited'
import type { Viewer } from './sheets'

export interface ReviewRights {
  /** Reads the project's revisions, drafts included (admin, or an engineer or checker member). */
  staff: boolean
  /** A client member of the project: issued and superseded revisions only, never comments. */
  client: boolean
  /** Holds the checker role and is a checker member of the project. */
  checker: boolean
  /** Holds the engineer role and is an engineer member of the project. */
  engineer: boolean
}

export async function reviewRights(db: Executor, projectId: number, viewer: Viewer): Promise<ReviewRights> {
  const rows = await db
    .select({ role: projectMembers.role })
    .from(projectMembers)
    .where(and(eq(projectMembers.projectId, projectId), eq(projectMembers.personId, viewer.id)))
  const roles = rows.map((row) => row.role as ProjectRole)
  const holds = (role: ProjectRole) => roles.includes(role) && viewer.roles.includes(role)
  return {
    staff: viewer.roles.includes('admin') || holds('engineer') || holds('checker'),
    client: holds('client'),
    checker: holds('checker'),
    engineer: holds('engineer'),
  }
}

/** A revision with its sheet's project, as the review routes need it. */
export async function loadRevision(db: Executor, revisionId: number, lock = false) {
  const query = db
    .select({
      id: sheetRevisions.id,
      sheetId: sheetRevisions.sheetId,
      projectId: sheets.projectId,
      index: sheetRevisions.revisionIndex,
      status: sheetRevisions.status,
      version: sheetRevisions.version,
      document: sheetRevisions.document,
      result: sheetRevisions.result,
      engineVersion: sheetRevisions.engineVersion,
      preparedBy: sheetRevisions.preparedBy,
      editedBy: sheetRevisions.editedBy,
      editedAt: sheetRevisions.editedAt,
    })
    .from(sheetRevisions)
    .innerJoin(sheets, eq(sheets.id, sheetRevisions.sheetId))
    .where(eq(sheetRevisions.id, revisionId))
  const [row] = lock ? await query.for('update', { of: sheetRevisions }) : await query
  if (!row) throw createError({ statusCode: 404, statusMessage: 'No such revision' })
  return { ...row, status: row.status as SheetStatus }
}
export type LoadedRevision = Awaited<ReturnType<typeof loadRevision>>

/**
 * Whether `personId` prepared or edited the revision: its preparer, its last editor, anyone in `revision_editors`
 * (every save since the lifecycle migration records its editor there), or anyone whose save of it is in the audit
 * trail (`sheet.saved` names the revision): revisions saved before that migration have only the preparer and the
 * last editor in `revision_editors`, while the trail holds every save, so both are read.
 */
export async function preparedOrEdited(db: Executor, revision: Pick<LoadedRevision, 'id' | 'preparedBy' | 'editedBy'>, personId: number): Promise<boolean> {
  if (revision.preparedBy === personId || revision.editedBy === personId) return true
  const [editor] = await db
    .select({ personId: revisionEditors.personId })
    .from(revisionEditors)
    .where(and(eq(revisionEditors.revisionId, revision.id), eq(revisionEditors.personId, personId)))
    .limit(1)
  if (editor) return true
  const [saved] = await db
    .select({ id: auditEvents.id })
    .from(auditEvents)
    .where(and(eq(auditEvents.action, 'sheet.saved'), eq(auditEvents.actorId, personId), sql`${auditEvents.detail}->>'revisionId' = ${String(revision.id)}`))
    .limit(1)
  return Boolean(saved)
}

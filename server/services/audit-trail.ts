// The append-only audit trail: recording events and the admins' paged list.
import { and, asc, desc, eq, sql, type SQL } from 'drizzle-orm'
import { auditEvents, people, projects, sheets } from '../db/schema'
import type { Database } from '../utils/db'
import type { AuditActions, AuditQuery, AuditRow } from '../../shared/schemas/audit'
import type { Page } from '../../shared/schemas/lists'
import { matchesTerm } from './search'

/** Who acted and through which request. */
export interface AuditContext {
  actorId: number | null
  ip: string | null
  method: string | null
  path: string | null
}

export interface AuditEntry {
  action: string
  subjectType?: string
  subjectId?: string | number
  status?: number
  detail?: Record<string, unknown>
  /**
   * The project and sheet the event happened on. Rarely needed: the database fills them on insert from the
   * subject (`sheet`, `revision`, `package`, `project`), the detail's `sheetId`, `revisionId`, `packageId` or
   * `projectId`, or the request path (drizzle/0007_audit_event_place_trigger.sql).
   */
  projectId?: number
  sheetId?: number
}

export async function recordAuditEvent(db: Pick<Database, 'insert'>, context: AuditContext, entry: AuditEntry): Promise<void> {
  await db.insert(auditEvents).values({
    actorId: context.actorId,
    ip: context.ip,
    method: context.method,
    path: context.path,
    action: entry.action,
    subjectType: entry.subjectType ?? null,
    subjectId: entry.subjectId === undefined ? null : String(entry.subjectId),
    status: entry.status ?? null,
    detail: entry.detail ?? {},
    projectId: entry.projectId ?? null,
    sheetId: entry.sheetId ?? null,
  })
}

/** GET /api/audit: one page of the trail, filtered by project, sheet, person (who acted) and action. */
export async function listAuditEvents(db: Database, query: AuditQuery): Promise<Page<AuditRow>> {
  const filters: SQL[] = []
  if (query.q) filters.push(matchesTerm(query.q, [auditEvents.action, auditEvents.path, people.name, people.email]))
  if (query.projectId !== undefined) filters.push(eq(auditEvents.projectId, query.projectId))
  if (query.sheetId !== undefined) filters.push(eq(auditEvents.sheetId, query.sheetId))
  if (query.personId !== undefined) filters.push(eq(auditEvents.actorId, query.personId))
  if (query.action !== undefined) filters.push(eq(auditEvents.action, query.action))
  const where = filters.length ? and(...filters) : undefined
  const order = query.dir === 'desc' ? [desc(auditEvents.at), desc(auditEvents.id)] : [asc(auditEvents.at), asc(auditEvents.id)]
  const [rows, [counted]] = await Promise.all([
    db
      .select({
        id: auditEvents.id,
        at: auditEvents.at,
        actorId: auditEvents.actorId,
        actorName: people.name,
        actorEmail: people.email,
        action: auditEvents.action,
        subjectType: auditEvents.subjectType,
        subjectId: auditEvents.subjectId,
        status: auditEvents.status,
        method: auditEvents.method,
        path: auditEvents.path,
        ip: auditEvents.ip,
        detail: auditEvents.detail,
        projectId: auditEvents.projectId,
        projectNumber: projects.number,
        sheetId: auditEvents.sheetId,
        sheetNumber: sheets.number,
      })
      .from(auditEvents)
      .leftJoin(people, eq(people.id, auditEvents.actorId))
      .leftJoin(projects, eq(projects.id, auditEvents.projectId))
      .leftJoin(sheets, eq(sheets.id, auditEvents.sheetId))
      .where(where)
      .orderBy(...order)
      .limit(query.pageSize)
      .offset((query.page - 1) * query.pageSize),
    db
      .select({ total: sql<number>`count(*)::int` })
      .from(auditEvents)
      .leftJoin(people, eq(people.id, auditEvents.actorId))
      .where(where),
  ])
  return {
    items: rows.map((row) => ({ ...row, at: row.at.toISOString(), detail: row.detail as Record<string, unknown> })),
    total: counted?.total ?? 0,
    page: query.page,
    pageSize: query.pageSize,
  }
}

/**
 * GET /api/audit/actions: the distinct actions of the trail, in order. A loose index scan over audit_events_action_at
 * (each step jumps to the next action), so it reads one index entry per action however long the trail grows.
 */
export async function listAuditActions(db: Database): Promise<AuditActions> {
  const rows = await db.execute<{ action: string }>(sql`
    with recursive found(action) as (
      (select action from ${auditEvents} order by action limit 1)
      union all
      select (select e.action from ${auditEvents} e where e.action > found.action order by e.action limit 1)
      from found where found.action is not null
    )
    select action from found where action is not null`)
  return [...rows].map((row) => row.action)
}

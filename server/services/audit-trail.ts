// The append-only audit trail: recording events and the admins' paged list.
import { and, asc, desc, eq, sql, type SQL } from 'drizzle-orm'
import type { z } from 'zod'
import { auditEvents, people } from '../db/schema'
import type { Database } from '../utils/db'
import type { auditQuerySchema, AuditRow } from '../../shared/schemas/audit'
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
  })
}

export async function listAuditEvents(db: Database, query: z.output<typeof auditQuerySchema>): Promise<Page<AuditRow>> {
  const filters: SQL[] = []
  if (query.q) filters.push(matchesTerm(query.q, [auditEvents.action, auditEvents.path, people.name, people.email]))
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
      })
      .from(auditEvents)
      .leftJoin(people, eq(people.id, auditEvents.actorId))
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

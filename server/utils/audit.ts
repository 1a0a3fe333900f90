// Writes to the append-only audit trail from a request: who, from where, which route.
import type { H3Event } from 'h3'
import { recordAuditEvent, type AuditContext, type AuditEntry } from '../services/audit-trail'

export function auditContext(event: H3Event, actorId: number | null): AuditContext {
  return {
    actorId,
    ip: getRequestIP(event) ?? null,
    method: event.method,
    path: event.path.split('?')[0] ?? event.path,
  }
}

export async function audit(event: H3Event, entry: AuditEntry, actorId?: number | null): Promise<void> {
  const session = actorId === undefined ? await getUserSession(event) : null
  await recordAuditEvent(useDb(), auditContext(event, actorId ?? session?.user?.id ?? null), entry)
}

// A write and its audit record commit together or not at all (product.md: every transition is in the trail).
import type { Database } from '../utils/db'
import { recordAuditEvent, type AuditContext, type AuditEntry } from './audit-trail'

/** The transaction drizzle hands to `db.transaction`'s callback. */
export type Transaction = Parameters<Parameters<Database['transaction']>[0]>[0]
/** What a service reads and writes through: the pool, or a transaction already open. */
export type Executor = Database | Transaction

/**
 * Runs `work` in one transaction and records `entry` (or the entry made from `work`'s result) in the audit trail
 * inside the same transaction: when the audit write fails the change is rolled back, and when the change fails
 * nothing is recorded. An error `work` throws (a 404 or 409 from `createError`, say) rolls back and passes on.
 */
export async function audited<T>(
  db: Database,
  context: AuditContext,
  entry: AuditEntry | ((result: T) => AuditEntry),
  work: (tx: Transaction) => Promise<T>,
): Promise<T> {
  return db.transaction(async (tx) => {
    const result = await work(tx)
    await recordAuditEvent(tx, context, typeof entry === 'function' ? entry(result) : entry)
    return result
  })
}

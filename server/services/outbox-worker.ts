// The outbox worker: delivers the rows queueMail wrote (server/services/outbox.ts). Every app server runs one
// (server/plugins/background-work.ts); they share the table without a coordinator:
// - a worker claims a batch in one statement with FOR UPDATE SKIP LOCKED, setting claimed_until (its lease) and
//   counting the attempt, and commits the claim before it talks to any SMTP server;
// - a message is marked sent only while its lease is still this worker's (the claim's own timestamp is the
//   token), at the moment smtp-delivery.ts explains, so a worker that lost its lease aborts the message instead
//   of sending a copy another worker may send too;
// - a failed attempt is retried after an exponential backoff; after the last attempt the row is marked failed;
// - a worker that died holding rows lets them go when its lease runs out (another worker claims them again).
// Each delivery and each failure is a row of the audit trail (`mail.delivered`, `mail.failed`).
import { hostname } from 'node:os'
import { sql } from 'drizzle-orm'
import type { Database } from '../utils/db'
import { recordAuditEvent, type AuditContext } from './audit-trail'
import { DeliveryError, type OutboundMessage } from './smtp-delivery'

/** Sends `message`, running `commit` (which marks it sent) before the server can take it (smtp-delivery.ts). */
export type Deliver = (message: OutboundMessage, commit: () => Promise<void>) => Promise<void>

export interface OutboxWorkerOptions {
  db: Database
  deliver: Deliver
  /** Rows claimed at once. */
  batchSize?: number
  /** How long a claim holds: past it, another worker may take the row (this one died or hangs). */
  claimSeconds?: number
  /** Attempts in all, the first included; after the last failure the row is marked failed. */
  maxAttempts?: number
  /** The wait after the first failure; it doubles after each further one, up to `retryCapMs`. */
  retryBaseMs?: number
  retryCapMs?: number
  /** How often an idle worker looks for work when no notification wakes it. */
  pollMs?: number
  /** Named in the audit rows: which server delivered. */
  workerName?: string
  onError?: (error: unknown) => void
}

export const outboxDefaults = {
  batchSize: 10,
  claimSeconds: 60,
  maxAttempts: 8,
  // 30 s, 1, 2, 4, 8, 16, 32 min: the eighth attempt comes about an hour after the first (common practice for
  // mail relays is to keep trying for hours to days; an hour is enough to tell a person their link is late).
  retryBaseMs: 30_000,
  retryCapMs: 60 * 60_000,
  pollMs: 5_000,
}

/** The wait before attempt `attempt + 1` after attempt `attempt` (1-based) failed. */
export function retryDelayMs(attempt: number, baseMs: number, capMs: number): number {
  return Math.min(capMs, baseMs * 2 ** Math.max(0, attempt - 1))
}

type ClaimedRow = {
  id: number
  message_id: string
  kind: string
  recipient: string
  subject: string
  body: string
  attempts: number
  /** claimed_until as PostgreSQL prints it (microseconds kept): the token of this worker's lease. */
  claim: string
}

const systemContext: AuditContext = { actorId: null, ip: null, method: null, path: null }

export interface OutboxWorker {
  /** Starts the loop: a pass at once, then one per notification or `pollMs`. */
  start(): void
  /** Look for work now (a notification arrived). */
  wake(): void
  /** One pass: claims and delivers one batch; answers how many rows it claimed. */
  runOnce(): Promise<number>
  /** Finishes the message in hand, lets the rest of the batch go, and stops. */
  stop(): Promise<void>
}

export function createOutboxWorker(options: OutboxWorkerOptions): OutboxWorker {
  // An option given as undefined keeps its default (the plugin passes runtimeConfig's unset values so).
  const given = Object.fromEntries(Object.entries(options).filter(([, value]) => value !== undefined))
  const settings = { ...outboxDefaults, ...given } as typeof outboxDefaults & typeof options
  const workerName = options.workerName ?? `${hostname()}:${process.pid}`
  const { db, deliver } = settings
  let stopping = false
  let wakeUp: (() => void) | undefined
  /** A notification came while the worker was busy: look again before sleeping. */
  let woken = false
  let loop: Promise<void> | undefined

  async function claim(): Promise<ClaimedRow[]> {
    const rows = await db.execute<ClaimedRow>(sql`
      update outbox set claimed_until = now() + make_interval(secs => ${settings.claimSeconds}), attempts = attempts + 1
      where id in (
        select id from outbox
        where sent_at is null and failed_at is null and next_attempt_at <= now()
          and (claimed_until is null or claimed_until <= now()) and attempts < ${settings.maxAttempts}
        order by next_attempt_at, id
        limit ${settings.batchSize}
        for update skip locked)
      returning id, message_id, kind, recipient, subject, body, attempts, claimed_until::text as claim`)
    return [...rows].sort((a, b) => a.id - b.id)
  }

  /** Rows whose holder died on their last attempt: nobody will try them again. */
  async function giveUpAbandoned(): Promise<void> {
    await db.transaction(async (tx) => {
      const rows = await tx.execute<{ id: number; message_id: string; kind: string; recipient: string; attempts: number }>(sql`
        update outbox set failed_at = now(), claimed_until = null,
          last_error = 'the worker delivering it stopped during its last attempt'
        where id in (
          select id from outbox
          where sent_at is null and failed_at is null and attempts >= ${settings.maxAttempts} and claimed_until <= now()
          for update skip locked)
        returning id, message_id, kind, recipient, attempts`)
      for (const row of rows) {
        await recordAuditEvent(tx, systemContext, {
          action: 'mail.failed',
          subjectType: 'mail',
          subjectId: row.id,
          detail: { messageId: row.message_id, kind: row.kind, to: row.recipient, attempt: row.attempts, final: true, error: 'the worker delivering it stopped during its last attempt', worker: workerName },
        })
      }
    })
  }

  async function markSent(row: ClaimedRow): Promise<void> {
    await db.transaction(async (tx) => {
      const marked = await tx.execute(sql`
        update outbox set sent_at = now(), claimed_until = null, last_error = null
        where id = ${row.id} and sent_at is null and claimed_until = ${row.claim}::timestamptz
        returning id`)
      // Another worker holds the row now (this lease ran out): abort, so the message goes out once, from there.
      if (marked.length === 0) throw new Error('the claim on this message ran out before it was sent')
      await recordAuditEvent(tx, systemContext, {
        action: 'mail.delivered',
        subjectType: 'mail',
        subjectId: row.id,
        detail: { messageId: row.message_id, kind: row.kind, to: row.recipient, attempt: row.attempts, worker: workerName },
      })
    })
  }

  async function markFailed(row: ClaimedRow, error: DeliveryError | Error): Promise<void> {
    const final = row.attempts >= settings.maxAttempts
    const delay = retryDelayMs(row.attempts, settings.retryBaseMs, settings.retryCapMs)
    const reason = error.message.slice(0, 1000)
    const refusedAfterData = error instanceof DeliveryError && error.afterCommit
    // Refused after the end of DATA: this worker's commit marked it sent; that is undone here.
    const stillOurs = refusedAfterData
      ? sql`sent_at is not null and claimed_until is null`
      : sql`sent_at is null and claimed_until = ${row.claim}::timestamptz`
    await db.transaction(async (tx) => {
      const updated = await tx.execute<{ retry_at: string | null }>(sql`
        update outbox set
          sent_at = null,
          claimed_until = null,
          last_error = ${reason},
          failed_at = ${final ? sql`now()` : sql`null`},
          next_attempt_at = ${final ? sql`next_attempt_at` : sql`now() + make_interval(secs => ${delay / 1000})`}
        where id = ${row.id} and ${stillOurs}
        returning ${final ? sql`null` : sql`next_attempt_at`}::text as retry_at`)
      if (updated.length === 0) return // another worker holds it now; its own attempt decides
      await recordAuditEvent(tx, systemContext, {
        action: 'mail.failed',
        subjectType: 'mail',
        subjectId: row.id,
        detail: {
          messageId: row.message_id,
          kind: row.kind,
          to: row.recipient,
          attempt: row.attempts,
          final,
          error: reason,
          ...(final ? {} : { retryAt: new Date(updated[0]!.retry_at!).toISOString(), retryAfterMs: delay }),
          ...(refusedAfterData ? { refusedAfterData: true } : {}),
          worker: workerName,
        },
      })
    })
  }

  /** Lets the claimed rows not yet tried go at once (this worker is stopping), the attempt not counted. */
  async function release(rows: ClaimedRow[]): Promise<void> {
    for (const row of rows) {
      await db.execute(sql`update outbox set claimed_until = null, attempts = attempts - 1
        where id = ${row.id} and sent_at is null and claimed_until = ${row.claim}::timestamptz`)
    }
  }

  async function runOnce(): Promise<number> {
    await giveUpAbandoned()
    const rows = await claim()
    for (const [index, row] of rows.entries()) {
      if (stopping) {
        await release(rows.slice(index))
        break
      }
      const message = { messageId: row.message_id, to: row.recipient, subject: row.subject, text: row.body }
      try {
        await deliver(message, () => markSent(row))
      } catch (error) {
        await markFailed(row, error instanceof Error ? error : new Error(String(error)))
      }
    }
    return rows.length
  }

  function sleep(ms: number): Promise<void> {
    if (woken) {
      woken = false
      return Promise.resolve()
    }
    return new Promise((resolve) => {
      const timer = setTimeout(() => {
        wakeUp = undefined
        resolve()
      }, ms)
      wakeUp = () => {
        woken = false
        clearTimeout(timer)
        wakeUp = undefined
        resolve()
      }
    })
  }

  async function run(): Promise<void> {
    while (!stopping) {
      let claimed = 0
      try {
        claimed = await runOnce()
      } catch (error) {
        settings.onError?.(error)
      }
      // A full batch means more may be waiting: go on at once.
      if (!stopping && claimed < settings.batchSize) await sleep(settings.pollMs)
    }
  }

  return {
    start() {
      loop ??= run()
    },
    wake() {
      if (wakeUp) wakeUp()
      else woken = true
    },
    runOnce,
    async stop() {
      stopping = true
      wakeUp?.()
      await loop
    },
  }
}

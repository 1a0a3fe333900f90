// E-mail through the outbox: a message is a row written in the caller's transaction, so it goes out if and only
// if the change it tells of commits. The outbox worker (server/plugins/, issue 8) delivers the rows.
import { randomUUID } from 'node:crypto'
import { sql } from 'drizzle-orm'
import { outbox } from '../db/schema'
import type { Executor } from './audited'

export interface QueuedMail {
  /** What the message is for: `sheet.submitted`, `sheet.returned`, `sheet.approved`, `sheet.issued`, `password.reset`, … */
  kind: string
  to: string
  subject: string
  text: string
}

/** The channel queueMail notifies at commit (server/plugins/background-work.ts listens). */
export const OUTBOX_CHANNEL = 'loopwright_outbox'

/** The Message-ID domain: ours, so the sink (and a real relay) sees one id per message, never reused. */
const MESSAGE_ID_DOMAIN = 'loopwright.example.com'

/** Writes `mails` to the outbox through `tx` (the transaction of the change they tell of); answers their Message-IDs. */
export async function queueMail(tx: Executor, ...mails: QueuedMail[]): Promise<string[]> {
  if (mails.length === 0) return []
  const rows = mails.map((mail) => ({
    messageId: `<${randomUUID()}@${MESSAGE_ID_DOMAIN}>`,
    kind: mail.kind,
    recipient: mail.to,
    subject: mail.subject,
    body: mail.text,
  }))
  await tx.insert(outbox).values(rows)
  // Delivered at commit (never if the change rolls back): an idle worker starts at once, not at its next poll.
  await tx.execute(sql`select pg_notify(${OUTBOX_CHANNEL}, '')`)
  return rows.map((row) => row.messageId)
}

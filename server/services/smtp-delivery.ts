// One message over SMTP with nodemailer's own connection (nodemailer/lib/smtp-connection), with the sender's
// record of "sent" committed at the one moment that makes a crash neither lose nor repeat the message.
//
// An SMTP server takes a message when it reads the line "." that ends DATA, and the sender learns it from the
// 250 that follows. A worker that marks the row sent after the 250 sends it twice when it dies between the two
// (the relay has it, the row says unsent); one that marks it before DATA loses it when it dies before the end.
// So the message's bytes go out first, then `commit` runs (the row is marked sent), and only then the final "."
// is written: a worker killed before the commit leaves a message the server never completed (it discards it,
// and the row is sent again later); killed after it, the "." is already on its way or follows at once. What is
// left is a window of a few event-loop turns between the commit and the write of the ".", against the whole
// conversation before it (tests/server/outbox-crash.test.ts measures what a SIGKILL does).
// nodemailer's sendMail cannot hold back the end of DATA, which is why the connection is driven here.
import { Readable } from 'node:stream'
import MailComposer from 'nodemailer/lib/mail-composer/index.js'
import SMTPConnection from 'nodemailer/lib/smtp-connection/index.js'

export interface SmtpTarget {
  host: string
  port: number
  /** The From header and envelope sender. */
  from: { name: string; address: string }
}

export interface OutboundMessage {
  messageId: string
  to: string
  subject: string
  text: string
}

/** Where a delivery stopped: before the server had the whole message, or when it refused the completed message. */
export class DeliveryError extends Error {
  constructor(
    message: string,
    /** True when the server refused the message after its end (the commit had run and must be undone). */
    readonly afterCommit: boolean,
  ) {
    super(message)
  }
}

/** The message's bytes, then (once `commit` has resolved) its end; a failed commit aborts the message. */
class GatedMessage extends Readable {
  private stage: 'body' | 'waiting' | 'ended' = 'body'
  committed = false

  constructor(
    private readonly bytes: Buffer,
    private readonly commit: () => Promise<void>,
  ) {
    super()
  }

  override _read(): void {
    if (this.stage === 'body') {
      this.stage = 'waiting'
      this.push(this.bytes)
      return
    }
    if (this.stage !== 'waiting') return
    // Asked for more: the body has gone to the connection. Record the delivery, then let DATA end.
    this.stage = 'ended'
    this.commit().then(
      () => {
        this.committed = true
        this.push(null)
      },
      (error: Error) => this.destroy(error),
    )
  }
}

function compose(target: SmtpTarget, message: OutboundMessage): Promise<Buffer> {
  const composer = new MailComposer({
    from: { name: target.from.name, address: target.from.address },
    to: message.to,
    subject: message.subject,
    text: message.text,
    messageId: message.messageId,
  })
  return new Promise((resolve, reject) => composer.compile().build((error, bytes) => (error ? reject(error) : resolve(bytes))))
}

/**
 * Delivers `message`; `commit` records it as sent (it runs once the server has every byte but the end).
 * Throws DeliveryError: `afterCommit` false when nothing reached the server in full (commit not run or failed),
 * true when the server refused the completed message after the commit.
 */
export async function deliverOverSmtp(target: SmtpTarget, message: OutboundMessage, commit: () => Promise<void>): Promise<void> {
  const bytes = await compose(target, message)
  const connection = new SMTPConnection({
    host: target.host,
    port: target.port,
    secure: false,
    // The local sink speaks plain SMTP on loopback; a real relay would be configured with TLS here.
    ignoreTLS: true,
    connectionTimeout: 10_000,
    greetingTimeout: 10_000,
    socketTimeout: 30_000,
  })
  const body = new GatedMessage(bytes, commit)
  // The connection reports its failures to send()'s callback too; an 'error' event without a listener would end the process.
  let failure: Error | undefined
  connection.on('error', (error: Error) => (failure ??= error))
  try {
    await new Promise<void>((resolve, reject) => {
      connection.once('error', reject)
      connection.connect(() => resolve())
    })
    await new Promise<void>((resolve, reject) => {
      connection.send({ from: target.from.address, to: [message.to] }, body, (error) => (error ? reject(error) : resolve()))
    })
    connection.quit()
  } catch (error) {
    connection.close()
    const reason = (error as Error)?.message || failure?.message || String(error)
    throw new DeliveryError(reason, body.committed)
  }
}

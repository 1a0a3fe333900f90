// Outgoing e-mail, to the SMTP server of runtimeConfig (locally: the mail sink, scripts/mail-sink). The app writes
// every message to the outbox (queueMail of server/services/outbox.ts) in the transaction of the change it tells of;
// this delivery is the outbox worker's alone (server/plugins/background-work.ts), so nothing sends mail directly.
import { deliverOverSmtp, type OutboundMessage } from '../services/smtp-delivery'

/** Delivers one outbox row with its own Message-ID, committing it sent before the server can take it (smtp-delivery.ts). */
export function deliverOutboxMessage(message: OutboundMessage, commit: () => Promise<void>): Promise<void> {
  const config = useRuntimeConfig()
  return deliverOverSmtp(
    { host: config.smtpHost, port: Number(config.smtpPort), from: { name: config.public.appName, address: 'no-reply@loopwright.example.com' } },
    message,
    commit,
  )
}

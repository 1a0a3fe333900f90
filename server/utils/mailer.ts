// Outgoing e-mail through nodemailer to the SMTP server of runtimeConfig (locally: the mail sink, scripts/mail-sink).
import nodemailer, { type Transporter } from 'nodemailer'
import type { OutgoingMail } from '../services/outgoing-mail'
import { deliverOverSmtp, type OutboundMessage } from '../services/smtp-delivery'

let transport: Transporter | undefined

export async function sendMail(mail: OutgoingMail): Promise<void> {
  const config = useRuntimeConfig()
  transport ??= nodemailer.createTransport({
    host: config.smtpHost,
    port: Number(config.smtpPort),
    secure: false,
    // The local sink speaks plain SMTP on loopback; a real relay would be configured with TLS here.
    ignoreTLS: true,
  })
  await transport.sendMail({ from: `${config.public.appName} <no-reply@loopwright.example.com>`, ...mail })
}

/** Delivers one outbox row with its own Message-ID, committing it sent before the server can take it (smtp-delivery.ts). */
export function deliverOutboxMessage(message: OutboundMessage, commit: () => Promise<void>): Promise<void> {
  const config = useRuntimeConfig()
  return deliverOverSmtp(
    { host: config.smtpHost, port: Number(config.smtpPort), from: { name: config.public.appName, address: 'no-reply@loopwright.example.com' } },
    message,
    commit,
  )
}

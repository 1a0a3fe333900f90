// Outgoing e-mail through nodemailer to the SMTP server of runtimeConfig (locally: the mail sink, scripts/mail-sink).
import nodemailer, { type Transporter } from 'nodemailer'
import type { OutgoingMail } from '../services/outgoing-mail'

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

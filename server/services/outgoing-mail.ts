/** One e-mail the app sends; delivered by server/utils/mailer.ts. */
export interface OutgoingMail {
  to: string
  subject: string
  text: string
}

export type SendMail = (mail: OutgoingMail) => Promise<void>

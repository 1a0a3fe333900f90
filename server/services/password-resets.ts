// Password reset by e-mailed link: a random token whose SHA-256 alone is stored, working once and for one hour
// (OWASP's Forgot Password Cheat Sheet advises single-use, short-lived, random tokens; from memory). The request
// answers the same whether the address has an account, and the mail goes through the outbox, so neither the
// answer nor its time tells which addresses exist. Throttles (counted in password_reset_requests, whatever the
// address): ten requests from one client address in 15 minutes answer 429; past three links to one address in an
// hour, the request is answered as usual and no further mail goes.
import { and, eq, gt, isNull, sql } from 'drizzle-orm'
import { createError } from 'h3'
import { passwordResetRequests, passwordResets, people } from '../db/schema'
import type { Database } from '../utils/db'
import { newSecretToken, tokenHash } from '../utils/token-hash'
import { recordAuditEvent, type AuditContext } from './audit-trail'
import { audited } from './audited'
import { queueMail } from './outbox'
import { setPassword } from './passwords'

export const resetLinkMinutes = 60
export const requestsPerClient = { count: 10, minutes: 15 }
export const linksPerAddress = { count: 3, minutes: 60 }

/** Answers nothing; throws 429 (with retryAfterSeconds) past the client's limit. */
export async function requestPasswordReset(db: Database, email: string, context: AuditContext, siteUrl: string): Promise<void> {
  const [fromClient] = await db
    .select({ n: sql<number>`count(*)::int` })
    .from(passwordResetRequests)
    .where(and(context.ip === null ? isNull(passwordResetRequests.ip) : eq(passwordResetRequests.ip, context.ip), gt(passwordResetRequests.at, sql`now() - make_interval(mins => ${requestsPerClient.minutes})`)))
  if ((fromClient?.n ?? 0) >= requestsPerClient.count) {
    await recordAuditEvent(db, context, { action: 'access.refused', status: 429, detail: { reason: 'too many password-reset requests from this client address' } })
    throw createError({ statusCode: 429, statusMessage: 'Too many reset requests from this network address; try again later', data: { retryAfterSeconds: requestsPerClient.minutes * 60 } })
  }
  await db.transaction(async (tx) => {
    await tx.insert(passwordResetRequests).values({ email, ip: context.ip })
    const [person] = await tx.select({ id: people.id, name: people.name, active: people.active }).from(people).where(eq(people.email, email))
    if (!person || !person.active) {
      await recordAuditEvent(tx, context, { action: 'password.reset-requested', detail: { known: false } })
      return
    }
    const [recent] = await tx
      .select({ n: sql<number>`count(*)::int` })
      .from(passwordResets)
      .where(and(eq(passwordResets.personId, person.id), gt(passwordResets.createdAt, sql`now() - make_interval(mins => ${linksPerAddress.minutes})`)))
    if ((recent?.n ?? 0) >= linksPerAddress.count) {
      await recordAuditEvent(tx, context, { action: 'password.reset-throttled', subjectType: 'person', subjectId: person.id })
      return
    }
    const token = newSecretToken()
    await tx.insert(passwordResets).values({ personId: person.id, tokenHash: tokenHash(token), ip: context.ip, expiresAt: sql`now() + make_interval(mins => ${resetLinkMinutes})` })
    await queueMail(tx, {
      kind: 'password.reset',
      to: email,
      subject: 'Reset your Loopwright password',
      text: [
        `Hello ${person.name},`,
        '',
        'Someone (we hope you) asked to reset the password of your Loopwright account. Choose a new one here:',
        `${siteUrl}/reset-password/${token}`,
        '',
        `The link works once, within ${resetLinkMinutes} minutes. Setting a new password signs you out everywhere.`,
        'If you did not ask for this, ignore this message: your password stays as it is.',
      ].join('\n'),
    })
    await recordAuditEvent(tx, context, { action: 'password.reset-requested', subjectType: 'person', subjectId: person.id, detail: { known: true } })
  })
}

async function openReset(db: Pick<Database, 'select'>, token: string) {
  const [row] = await db
    .select({ id: passwordResets.id, personId: people.id, email: people.email, active: people.active, usedAt: passwordResets.usedAt, expired: sql<boolean>`${passwordResets.expiresAt} <= now()` })
    .from(passwordResets)
    .innerJoin(people, eq(people.id, passwordResets.personId))
    .where(eq(passwordResets.tokenHash, tokenHash(token)))
  if (!row || row.usedAt || !row.active) throw createError({ statusCode: 404, statusMessage: 'This reset link is unknown or already used' })
  if (row.expired) throw createError({ statusCode: 410, statusMessage: 'This reset link has expired; ask for a new one' })
  return row
}

export async function readReset(db: Database, token: string): Promise<{ email: string }> {
  return { email: (await openReset(db, token)).email }
}

/** Sets the password (every session of the person ends: setPassword) and spends every open link of the person. */
export async function resetPassword(db: Database, token: string, passwordHash: string, context: AuditContext): Promise<void> {
  const reset = await openReset(db, token)
  await audited(db, { ...context, actorId: reset.personId }, { action: 'password.reset', subjectType: 'person', subjectId: reset.personId }, async (tx) => {
    const spent = await tx.update(passwordResets).set({ usedAt: sql`now()` }).where(and(eq(passwordResets.id, reset.id), isNull(passwordResets.usedAt))).returning({ id: passwordResets.id })
    if (spent.length === 0) throw createError({ statusCode: 404, statusMessage: 'This reset link is unknown or already used' })
    await tx.update(passwordResets).set({ usedAt: sql`now()` }).where(and(eq(passwordResets.personId, reset.personId), isNull(passwordResets.usedAt)))
    await setPassword(tx, reset.personId, passwordHash)
  })
}

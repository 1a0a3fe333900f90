// One-time invitation links: a random token e-mailed to the person; only its SHA-256 is stored.
// The link works once and expires after 7 days.
import { and, eq, isNull, sql } from 'drizzle-orm'
import { createError } from 'h3'
import { invitations, people } from '../db/schema'
import type { Database } from '../utils/db'
import { newSecretToken, tokenHash } from '../utils/token-hash'
import type { AuditContext } from './audit-trail'
import { audited, type Executor } from './audited'
import { queueMail } from './outbox'
import { setPassword } from './passwords'

export const invitationDays = 7

/**
 * Writes the invitation and its e-mail (the outbox, server/services/outbox.ts) through `tx`, the transaction that
 * creates the person: the link goes out if and only if the person is created. The token is in the mail alone.
 */
export async function createInvitation(
  tx: Executor,
  person: { id: number; name: string; email: string },
  invitedBy: number | null,
  siteUrl: string,
): Promise<void> {
  const token = newSecretToken()
  await tx.insert(invitations).values({
    personId: person.id,
    tokenHash: tokenHash(token),
    invitedBy,
    expiresAt: sql`now() + make_interval(days => ${invitationDays})`,
  })
  await queueMail(tx, {
    kind: 'person.invited',
    to: person.email,
    subject: 'Your Loopwright account: choose a password',
    text: [
      `Hello ${person.name},`,
      '',
      'An administrator has opened a Loopwright account for you.',
      `Choose your password with this link. It works once and expires in ${invitationDays} days:`,
      '',
      `${siteUrl.replace(/\/$/, '')}/invitation/${token}`,
      '',
      'If you did not expect this message, you can ignore it.',
    ].join('\n'),
  })
}

async function openInvitation(db: Database, token: string) {
  const [row] = await db
    .select({
      id: invitations.id,
      personId: people.id,
      name: people.name,
      email: people.email,
      active: people.active,
      usedAt: invitations.usedAt,
      expired: sql<boolean>`${invitations.expiresAt} <= now()`,
    })
    .from(invitations)
    .innerJoin(people, eq(people.id, invitations.personId))
    .where(eq(invitations.tokenHash, tokenHash(token)))
  if (!row || row.usedAt || !row.active) throw createError({ statusCode: 404, statusMessage: 'This invitation link is unknown or already used' })
  if (row.expired) throw createError({ statusCode: 410, statusMessage: 'This invitation link has expired; ask an administrator for a new one' })
  return row
}

export async function readInvitation(db: Database, token: string): Promise<{ name: string; email: string }> {
  const { name, email } = await openInvitation(db, token)
  return { name, email }
}

/** Sets the person's password and spends the token. `passwordHash` comes from nuxt-auth-utils' hashPassword. */
export async function acceptInvitation(db: Database, token: string, passwordHash: string, context: AuditContext): Promise<void> {
  const invitation = await openInvitation(db, token)
  const entry = { action: 'invitation.accepted', subjectType: 'person', subjectId: invitation.personId }
  await audited(db, { ...context, actorId: invitation.personId }, entry, async (tx) => {
    // Spending the token and setting the password happen together, or not at all; a second use finds used_at set.
    const spent = await tx
      .update(invitations)
      .set({ usedAt: sql`now()` })
      .where(and(eq(invitations.id, invitation.id), isNull(invitations.usedAt)))
      .returning({ id: invitations.id })
    if (spent.length === 0) throw createError({ statusCode: 404, statusMessage: 'This invitation link is unknown or already used' })
    await setPassword(tx, invitation.personId, passwordHash)
  })
}

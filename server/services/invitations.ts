// One-time invitation links: a random token e-mailed to the person; only its SHA-256 is stored.
// The link works once and expires after 7 days.
import { createHash, randomBytes } from 'node:crypto'
import { and, eq, isNull, sql } from 'drizzle-orm'
import { createError } from 'h3'
import { invitations, people } from '../db/schema'
import type { Database } from '../utils/db'
import type { AuditContext } from './audit-trail'
import { audited, type Executor } from './audited'

export const invitationDays = 7

function hashToken(token: string): string {
  return createHash('sha256').update(token).digest('hex')
}

/** Returns the token to put in the link; it is not stored. */
export async function createInvitation(db: Executor, personId: number, invitedBy: number | null): Promise<string> {
  const token = randomBytes(32).toString('base64url')
  await db.insert(invitations).values({
    personId,
    tokenHash: hashToken(token),
    invitedBy,
    expiresAt: sql`now() + make_interval(days => ${invitationDays})`,
  })
  return token
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
    .where(eq(invitations.tokenHash, hashToken(token)))
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
    await tx.update(people).set({ passwordHash }).where(eq(people.id, invitation.personId))
  })
}

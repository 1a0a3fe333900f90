// Server-side sessions: one row per sign-in, named by a random id that only the sealed cookie holds
// (its SHA-256 is stored, like invitation tokens). A session ends when it is revoked (sign-out,
// deactivation, a password or role change, an admin's "sign out everywhere"), after the idle timeout,
// or at its absolute lifetime, whichever comes first; the cookie's own maxAge is the absolute lifetime.
//
// Lifetimes: NIST SP 800-63B (rev. 3, §4.2.3, AAL2; from memory) asks for re-authentication at least every
// 12 hours whatever the activity and after 30 minutes of inactivity. 12 hours absolute is also common
// practice for firm tools (a working day); 30 minutes idle follows the same guideline, so a session left
// open on an unattended desk ends within half an hour.
import { and, eq, gt, isNull, sql } from 'drizzle-orm'
import { people, sessions } from '../db/schema'
import type { Database } from '../utils/db'
import { newSecretToken, tokenHash } from '../utils/token-hash'
import type { Role } from '../../shared/schemas/roles'

export const absoluteLifetimeHours = 12
export const idleTimeoutMinutes = 30
/** `last_seen_at` is written at most this often, not on every request. */
export const lastSeenIntervalSeconds = 60

/** Why a session ended; stored in `sessions.revoked_reason` and in the audit trail. */
export type EndReason =
  | 'signed out'
  | 'signed in again'
  | 'deactivated'
  | 'reactivated'
  | 'roles changed'
  | 'password changed'
  | 'signed out everywhere by an administrator'
  | 'idle timeout'
  | 'absolute lifetime'

export interface SessionPerson {
  id: number
  name: string
  email: string
  roles: Role[]
  organisationId: number | null
}

export function sessionPersonOf(person: typeof people.$inferSelect): SessionPerson {
  return {
    id: person.id,
    name: person.name,
    email: person.email,
    roles: person.roles as Role[],
    organisationId: person.organisationId,
  }
}

type Executor = Pick<Database, 'insert' | 'update' | 'select'>

/** Opens a session for the person; returns the id to seal into the cookie (it is not stored). */
export async function startSession(db: Executor, personId: number, ip: string | null): Promise<string> {
  const sessionId = newSecretToken()
  await db.insert(sessions).values({
    tokenHash: tokenHash(sessionId),
    personId,
    ip,
    expiresAt: sql`now() + make_interval(hours => ${absoluteLifetimeHours})`,
  })
  return sessionId
}

/** Ends one session (sign-out, or a new sign-in in the same browser); true when it was live. */
export async function endSession(db: Executor, sessionId: string, reason: EndReason): Promise<boolean> {
  const ended = await db
    .update(sessions)
    .set({ revokedAt: sql`now()`, revokedReason: reason })
    .where(and(eq(sessions.tokenHash, tokenHash(sessionId)), isNull(sessions.revokedAt)))
    .returning({ id: sessions.id })
  return ended.length > 0
}

/** Ends every live session of the person; returns how many were live. */
export async function endSessionsOf(db: Executor, personId: number, reason: EndReason): Promise<number> {
  const ended = await db
    .update(sessions)
    .set({ revokedAt: sql`now()`, revokedReason: reason })
    .where(and(eq(sessions.personId, personId), isNull(sessions.revokedAt), gt(sessions.expiresAt, sql`now()`)))
    .returning({ id: sessions.id })
  return ended.length
}

export type SessionCheck =
  | { state: 'live'; person: SessionPerson }
  | { state: 'ended'; reason: EndReason | 'unknown session' | 'person no longer exists'; personId: number | null }

/**
 * What the active-person middleware needs on every /api request: one read, and a write only when
 * `last_seen_at` is older than a minute or the session has just run out (so the row records its end).
 * Times are compared in PostgreSQL, on its clock alone.
 */
export async function checkSession(db: Database, sessionId: string | undefined): Promise<SessionCheck> {
  if (!sessionId) return { state: 'ended', reason: 'unknown session', personId: null }
  const [row] = await db
    .select({
      id: sessions.id,
      personId: sessions.personId,
      revokedReason: sessions.revokedReason,
      revoked: sql<boolean>`${sessions.revokedAt} is not null`,
      expired: sql<boolean>`${sessions.expiresAt} <= now()`,
      idle: sql<boolean>`${sessions.lastSeenAt} <= now() - make_interval(mins => ${idleTimeoutMinutes})`,
      seenLongAgo: sql<boolean>`${sessions.lastSeenAt} <= now() - make_interval(secs => ${lastSeenIntervalSeconds})`,
      person: people,
    })
    .from(sessions)
    .leftJoin(people, eq(people.id, sessions.personId))
    .where(eq(sessions.tokenHash, tokenHash(sessionId)))
  if (!row) return { state: 'ended', reason: 'unknown session', personId: null }
  if (row.revoked) return { state: 'ended', reason: (row.revokedReason as EndReason | null) ?? 'signed out', personId: row.personId }
  if (!row.person) return { state: 'ended', reason: 'person no longer exists', personId: row.personId }
  const ending: EndReason | null = !row.person.active
    ? 'deactivated'
    : row.expired
      ? 'absolute lifetime'
      : row.idle
        ? 'idle timeout'
        : null
  if (ending) {
    await db
      .update(sessions)
      .set({ revokedAt: sql`now()`, revokedReason: ending })
      .where(and(eq(sessions.id, row.id), isNull(sessions.revokedAt)))
    return { state: 'ended', reason: ending, personId: row.personId }
  }
  if (row.seenLongAgo) await db.update(sessions).set({ lastSeenAt: sql`now()` }).where(eq(sessions.id, row.id))
  return { state: 'live', person: sessionPersonOf(row.person) }
}

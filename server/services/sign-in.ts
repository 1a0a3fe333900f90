// Sign-in with e-mail and password, with the per-account limit: five failed attempts within
// 15 minutes answer 429 for the rest of that window (counted in the database, so restarts do not reset it).
import { and, eq, gt, sql } from 'drizzle-orm'
import { createError } from 'h3'
import { loginAttempts, people } from '../db/schema'
import type { Database } from '../utils/db'
import type { LoginBody } from '../../shared/schemas/auth'
import type { Role } from '../../shared/schemas/roles'
import { recordAuditEvent, type AuditContext } from './audit-trail'

export const failureLimit = 5
export const windowMinutes = 15

export interface SessionPerson {
  id: number
  name: string
  email: string
  roles: Role[]
  organisationId: number | null
}

export interface SignedIn {
  user: SessionPerson
  sessionVersion: number
}

export type VerifyPassword = (hash: string, plain: string) => Promise<boolean>

export function sessionPersonOf(person: typeof people.$inferSelect): SessionPerson {
  return {
    id: person.id,
    name: person.name,
    email: person.email,
    roles: person.roles as Role[],
    organisationId: person.organisationId,
  }
}

/** Failures counted against `email`: those within the window and after the last success. */
async function recentFailures(db: Database, email: string): Promise<{ count: number; oldest: Date | null }> {
  const [row] = await db
    .select({ count: sql<number>`count(*)::int`, oldest: sql<string | null>`min(${loginAttempts.at})` })
    .from(loginAttempts)
    .where(
      and(
        eq(loginAttempts.email, email),
        eq(loginAttempts.succeeded, false),
        gt(loginAttempts.at, sql`now() - make_interval(mins => ${windowMinutes})`),
        gt(
          loginAttempts.at,
          sql`coalesce((select max(${loginAttempts.at}) from ${loginAttempts}
            where ${loginAttempts.email} = ${email} and ${loginAttempts.succeeded}), '-infinity')`,
        ),
      ),
    )
  return { count: row?.count ?? 0, oldest: row?.oldest ? new Date(row.oldest) : null }
}

type Outcome =
  | { ok: true; signedIn: SignedIn }
  | { ok: false; status: 401 | 429; retryAfterSeconds?: number }

export async function signIn(db: Database, body: LoginBody, context: AuditContext, verify: VerifyPassword): Promise<SignedIn> {
  const email = body.email
  // The refusal is thrown after the transaction commits, so the failure it records is kept.
  const outcome = await db.transaction(async (tx): Promise<Outcome> => {
    // One attempt at a time per address, so parallel guesses cannot slip past the count.
    await tx.execute(sql`select pg_advisory_xact_lock(hashtext(${`sign-in:${email}`}))`)
    const failures = await recentFailures(tx as unknown as Database, email)
    if (failures.count >= failureLimit) {
      await recordAuditEvent(tx, { ...context, actorId: null }, { action: 'sign-in.rate-limited', status: 429, detail: { email } })
      const reopensAt = (failures.oldest?.getTime() ?? Date.now()) + windowMinutes * 60_000
      return { ok: false, status: 429, retryAfterSeconds: Math.max(1, Math.ceil((reopensAt - Date.now()) / 1000)) }
    }
    const [person] = await tx.select().from(people).where(eq(people.email, email))
    const passwordMatches = Boolean(person?.passwordHash) && (await verify(person!.passwordHash!, body.password))
    if (!person || !person.active || !passwordMatches) {
      await tx.insert(loginAttempts).values({ email, personId: person?.id ?? null, succeeded: false, ip: context.ip })
      const reason = !person
        ? 'unknown e-mail'
        : !person.passwordHash
          ? 'invitation not accepted'
          : !person.active
            ? 'deactivated'
            : 'wrong password'
      await recordAuditEvent(tx, { ...context, actorId: null }, {
        action: 'sign-in.failed',
        subjectType: person ? 'person' : undefined,
        subjectId: person?.id,
        status: 401,
        detail: { email, reason },
      })
      return { ok: false, status: 401 }
    }
    await tx.insert(loginAttempts).values({ email, personId: person.id, succeeded: true, ip: context.ip })
    await recordAuditEvent(tx, { ...context, actorId: person.id }, {
      action: 'sign-in.succeeded',
      subjectType: 'person',
      subjectId: person.id,
    })
    return { ok: true, signedIn: { user: sessionPersonOf(person), sessionVersion: person.sessionVersion } }
  })
  if (outcome.ok) return outcome.signedIn
  if (outcome.status === 429) {
    throw createError({
      statusCode: 429,
      statusMessage: 'Too many failed sign-ins for this account; try again later',
      data: { retryAfterSeconds: outcome.retryAfterSeconds },
    })
  }
  throw createError({ statusCode: 401, statusMessage: 'Wrong e-mail or password' })
}

/** What the active-person middleware needs to know about a live session. */
export type SessionCheck =
  | { state: 'current' }
  | { state: 'refused'; reason: string }
  | { state: 'changed'; signedIn: SignedIn }

export async function checkSession(db: Database, personId: number, sessionVersion: number | undefined): Promise<SessionCheck> {
  const [person] = await db.select().from(people).where(eq(people.id, personId))
  if (!person) return { state: 'refused', reason: 'person no longer exists' }
  if (!person.active) return { state: 'refused', reason: 'deactivated' }
  if (person.sessionVersion === sessionVersion) return { state: 'current' }
  return { state: 'changed', signedIn: { user: sessionPersonOf(person), sessionVersion: person.sessionVersion } }
}

// Sign-in with e-mail and password, and its two limits (counted in the database, so restarts do not reset them):
// - one e-mail address from one client address: five failures within 15 minutes (since the last success of that
//   address from that client) answer 429 from that client for the rest of the window; the owner signing in from
//   elsewhere is not held back, so a stranger cannot lock anyone out by guessing at a published address;
// - one client address across e-mail addresses: 50 failures within 15 minutes answer 429 to it for any address
//   (stops one client spraying guesses over many accounts; loose enough for an office behind one address).
// Every refusal takes the same time whether or not the address has an account: a password is always verified,
// against a dummy hash when there is no person or no password yet.
import { randomBytes } from 'node:crypto'
import { and, desc, eq, gt, sql } from 'drizzle-orm'
import { createError } from 'h3'
import { auditEvents, loginAttempts, people } from '../db/schema'
import type { Database } from '../utils/db'
import type { LoginBody } from '../../shared/schemas/auth'
import { recordAuditEvent, type AuditContext } from './audit-trail'
import { queueMail, type QueuedMail } from './outbox'
import { endSession, sessionPersonOf, startSession, type SessionPerson } from './sessions'

export const addressFailureLimit = 5
export const clientFailureLimit = 50
export const windowMinutes = 15

export type { SessionPerson }

export interface SignedIn {
  user: SessionPerson
  /** The new session's id, for the sealed cookie's `secure` part only. */
  sessionId: string
}

export interface Passwords {
  verify: (hash: string, plain: string) => Promise<boolean>
  hash: (plain: string) => Promise<string>
}

let dummyHash: Promise<string> | undefined
/** A hash of a random password nobody knows, made once with the same hasher as real ones (same cost). */
function dummyHashOf(passwords: Passwords): Promise<string> {
  dummyHash ??= passwords.hash(randomBytes(24).toString('base64url'))
  return dummyHash
}

type Executor = Pick<Database, 'select'>

/**
 * When a limit holds: the seconds until it opens again, or null when it does not hold. The limit holds while
 * `limit` failures lie in the window; it opens when the limit-th most recent of them leaves it.
 */
async function lockedFor(db: Executor, limit: number, filter: ReturnType<typeof and>): Promise<number | null> {
  const [row] = await db
    .select({
      seconds: sql<number>`ceil(extract(epoch from (${loginAttempts.at} + make_interval(mins => ${windowMinutes}) - now())))::int`,
    })
    .from(loginAttempts)
    .where(and(eq(loginAttempts.succeeded, false), gt(loginAttempts.at, sql`now() - make_interval(mins => ${windowMinutes})`), filter))
    .orderBy(desc(loginAttempts.at))
    .limit(1)
    .offset(limit - 1)
  return row ? Math.max(1, row.seconds) : null
}

const sameClient = (ip: string | null) => sql`${loginAttempts.ip} is not distinct from ${ip}`

/** Failures of this address from this client since its last success from this client. */
function addressFromClient(email: string, ip: string | null) {
  return and(
    eq(loginAttempts.email, email),
    sameClient(ip),
    gt(
      loginAttempts.at,
      sql`coalesce((select max(${loginAttempts.at}) from ${loginAttempts}
        where ${loginAttempts.email} = ${email} and ${sameClient(ip)} and ${loginAttempts.succeeded}), '-infinity')`,
    ),
  )
}

const noticeAction = 'sign-in.throttle-notice'

type Outcome =
  | { ok: true; signedIn: SignedIn }
  | { ok: false; status: 401 }
  | { ok: false; status: 429; retryAfterSeconds: number }

export interface SignInOptions {
  passwords: Passwords
  /** The id of the session the browser still holds, if any: a new sign-in ends it. */
  previousSessionId?: string
}

export async function signIn(db: Database, body: LoginBody, context: AuditContext, options: SignInOptions): Promise<SignedIn> {
  const email = body.email
  const ip = context.ip
  const dummy = await dummyHashOf(options.passwords)
  // The refusal is thrown after the transaction commits, so the failure it records is kept.
  const outcome = await db.transaction(async (tx): Promise<Outcome> => {
    // One attempt at a time per address, so parallel guesses cannot slip past the count.
    await tx.execute(sql`select pg_advisory_xact_lock(hashtext(${`sign-in:${email}`}))`)
    const [addressLock, clientLock] = await Promise.all([
      lockedFor(tx, addressFailureLimit, addressFromClient(email, ip)),
      lockedFor(tx, clientFailureLimit, sameClient(ip)),
    ])
    if (addressLock !== null || clientLock !== null) {
      await recordAuditEvent(tx, { ...context, actorId: null }, {
        action: 'sign-in.rate-limited',
        status: 429,
        detail: { email, limit: addressLock !== null ? 'address from this client' : 'this client' },
      })
      return { ok: false, status: 429, retryAfterSeconds: Math.max(addressLock ?? 0, clientLock ?? 0) }
    }
    const [person] = await tx.select().from(people).where(eq(people.email, email))
    // Verified in every case, so an unknown address costs what a wrong password costs.
    const passwordMatches = await options.passwords.verify(person?.passwordHash ?? dummy, body.password)
    if (!person || !person.passwordHash || !person.active || !passwordMatches) {
      await tx.insert(loginAttempts).values({ email, personId: person?.id ?? null, succeeded: false, ip })
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
      // The same two reads whether or not the address has an account; the owner hears once per window.
      const [nowLocked, [noticed]] = await Promise.all([
        lockedFor(tx, addressFailureLimit, addressFromClient(email, ip)),
        tx
          .select({ id: auditEvents.id })
          .from(auditEvents)
          .where(
            and(
              eq(auditEvents.action, noticeAction),
              gt(auditEvents.at, sql`now() - make_interval(mins => ${windowMinutes})`),
              eq(auditEvents.subjectId, String(person?.id ?? 0)),
            ),
          )
          .limit(1),
      ])
      if (nowLocked !== null && !noticed && person?.passwordHash && person.active) {
        await recordAuditEvent(tx, { ...context, actorId: null }, {
          action: noticeAction,
          subjectType: 'person',
          subjectId: person.id,
          detail: { email },
        })
        // In the transaction of the failure that reached the limit: the worker delivers it after the commit.
        await queueMail(tx, throttleNotice({ to: person.email, name: person.name }, ip))
      }
      return { ok: false, status: 401 }
    }
    await tx.insert(loginAttempts).values({ email, personId: person.id, succeeded: true, ip })
    if (options.previousSessionId) await endSession(tx, options.previousSessionId, 'signed in again')
    const sessionId = await startSession(tx, person.id, ip)
    await recordAuditEvent(tx, { ...context, actorId: person.id }, {
      action: 'sign-in.succeeded',
      subjectType: 'person',
      subjectId: person.id,
    })
    return { ok: true, signedIn: { user: sessionPersonOf(person), sessionId } }
  })
  if (outcome.ok) return outcome.signedIn
  if (outcome.status === 429) {
    throw createError({
      statusCode: 429,
      statusMessage: 'Too many failed sign-ins; try again later',
      data: { retryAfterSeconds: outcome.retryAfterSeconds },
    })
  }
  throw createError({ statusCode: 401, statusMessage: 'Wrong e-mail or password' })
}

/** The mail to an account's owner whose address has reached the limit; the requester learns nothing of it. */
function throttleNotice(owner: { to: string; name: string }, ip: string | null): QueuedMail {
  return {
    kind: noticeAction,
    to: owner.to,
    subject: 'Loopwright: failed sign-ins to your account',
    text: [
      `Hello ${owner.name},`,
      '',
      `Someone has tried to sign in to your Loopwright account with a wrong password ${addressFailureLimit} times`,
      `in ${windowMinutes} minutes${ip ? `, from the network address ${ip}` : ''}.`,
      `Sign-ins to your account from that address are paused for up to ${windowMinutes} minutes.`,
      'You can still sign in from anywhere else; your password has not been revealed.',
      '',
      'If this was you, nothing needs doing. If it was not, tell your administrator.',
      `You will hear from us about this at most once every ${windowMinutes} minutes.`,
    ].join('\n'),
  }
}

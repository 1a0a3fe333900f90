// Background work claimed in the database (PDF renders first): a job is a row written in the caller's
// transaction; whichever app server is free claims it with FOR UPDATE SKIP LOCKED.
//
//   enqueueJob(tx, kind, payload, createdBy?)      in the transaction of the change that asks for it
//   registerJobHandler(kind, async (payload, { progress, signal, attempt, jobId }) => result)
//                                                 once at start (a Nitro plugin); the result is stored as jsonb
//   GET /api/jobs/[id]                             its owner polls status and progress (a progress bar)
//
// The runner (createJobRunner, started in every app server by server/plugins/background-work.ts) holds a job by
// a lease (claimed_until) that it renews while the handler works; a runner that dies stops renewing, the lease
// runs out and another runner claims the job again, up to max_attempts in all. A failed attempt waits an
// exponential backoff; a handler throws JobFailure with `retry: false` for a job no retry can mend.
import { eq, sql } from 'drizzle-orm'
import { createError } from 'h3'
import { jobs } from '../db/schema'
import type { Database } from '../utils/db'
import type { Executor } from './audited'
import type { JobView } from '../../shared/schemas/jobs'

/** The channel enqueueJob notifies at commit, so an idle runner starts at once instead of at its next poll. */
export const JOBS_CHANNEL = 'loopwright_jobs'

/** Queues one job of `kind` through `tx`; answers its id, which the caller may poll for progress. */
export async function enqueueJob(tx: Executor, kind: string, payload: unknown, createdBy?: number, maxAttempts = 3): Promise<number> {
  const [row] = await tx.insert(jobs).values({ kind, payload, createdBy, maxAttempts }).returning({ id: jobs.id })
  await tx.execute(sql`select pg_notify(${JOBS_CHANNEL}, ${kind})`)
  return row!.id
}

export interface JobProgress {
  done: number
  total: number
  /** What is being done now, for the person watching: "sheet 3 of 12: NWD-214-03". */
  what?: string
}

export interface JobContext {
  jobId: number
  /** 1 on the first attempt. */
  attempt: number
  /** Writes the progress to the row (and renews the lease). */
  progress(progress: JobProgress): Promise<void>
  /** Aborted when this runner lost the job (its lease ran out) or is stopping: stop soon, the result is not kept. */
  signal: AbortSignal
}

export type JobHandler = (payload: unknown, context: JobContext) => Promise<unknown>

/** A failure the handler knows about; `retry: false` fails the job at once (a bad payload, a missing revision). */
export class JobFailure extends Error {
  constructor(
    message: string,
    readonly retry = true,
  ) {
    super(message)
  }
}

const handlers = new Map<string, JobHandler>()

/** Registers the handler of `kind` in this process; a runner claims only kinds it has a handler for. */
export function registerJobHandler(kind: string, handler: JobHandler): void {
  if (handlers.has(kind)) throw new Error(`a handler of job kind "${kind}" is registered already`)
  handlers.set(kind, handler)
}

/** For tests and reloads: forgets a handler. */
export function unregisterJobHandler(kind: string): void {
  handlers.delete(kind)
}

export interface JobRunnerOptions {
  db: Database
  /** Jobs run at once by this process. */
  concurrency?: number
  /** How long a claim holds without renewal; the runner renews it every third of this while the handler works. */
  claimSeconds?: number
  /** The wait after the first failed attempt; it doubles after each further one, up to `retryCapMs`. */
  retryBaseMs?: number
  retryCapMs?: number
  pollMs?: number
  onError?: (error: unknown) => void
}

export const jobDefaults = { concurrency: 2, claimSeconds: 30, retryBaseMs: 5_000, retryCapMs: 10 * 60_000, pollMs: 5_000 }

export function jobRetryDelayMs(attempt: number, baseMs: number, capMs: number): number {
  return Math.min(capMs, baseMs * 2 ** Math.max(0, attempt - 1))
}

type ClaimedJob = {
  id: number
  kind: string
  payload: unknown
  attempts: number
  max_attempts: number
  claim: string
}

export interface JobRunner {
  start(): void
  wake(): void
  /** Claims and runs at most one job; answers whether it found one. */
  runOnce(): Promise<boolean>
  /** Waits for the jobs in hand (their handlers are asked to stop) and stops. */
  stop(): Promise<void>
}

export function createJobRunner(options: JobRunnerOptions): JobRunner {
  // An option given as undefined keeps its default (the plugin passes runtimeConfig's unset values so).
  const given = Object.fromEntries(Object.entries(options).filter(([, value]) => value !== undefined))
  const settings = { ...jobDefaults, ...given } as typeof jobDefaults & typeof options
  const { db } = settings
  const stopping = new AbortController()
  const sleepers = new Set<() => void>()
  let woken = 0
  let loops: Promise<void>[] | undefined

  async function giveUpAbandoned(): Promise<void> {
    await db.execute(sql`
      update jobs set status = 'failed', finished_at = now(), claimed_until = null,
        last_error = 'the runner of its last attempt stopped before it finished'
      where id in (
        select id from jobs where status = 'running' and claimed_until <= now() and attempts >= max_attempts
        for update skip locked)`)
  }

  async function claim(): Promise<ClaimedJob | undefined> {
    const kinds = [...handlers.keys()]
    if (kinds.length === 0) return undefined
    const rows = await db.execute<ClaimedJob>(sql`
      update jobs set status = 'running', attempts = attempts + 1,
        claimed_until = now() + make_interval(secs => ${settings.claimSeconds})
      where id = (
        select id from jobs
        where kind in (${sql.join(kinds.map((kind) => sql`${kind}`), sql`, `)}) and attempts < max_attempts and (
          (status = 'waiting' and run_after <= now()) or (status = 'running' and claimed_until <= now()))
        order by run_after, id
        limit 1
        for update skip locked)
      returning id, kind, payload, attempts, max_attempts, claimed_until::text as claim`)
    return rows[0]
  }

  /** Renews the lease; answers false when another runner holds the job now. */
  async function renew(job: ClaimedJob, progress?: JobProgress): Promise<boolean> {
    const rows = await db.execute<{ claim: string }>(sql`
      update jobs set claimed_until = now() + make_interval(secs => ${settings.claimSeconds})
        ${progress ? sql`, progress = ${JSON.stringify(progress)}::jsonb` : sql``}
      where id = ${job.id} and status = 'running' and claimed_until = ${job.claim}::timestamptz
      returning claimed_until::text as claim`)
    if (rows.length === 0) return false
    job.claim = rows[0]!.claim
    return true
  }

  async function runJob(job: ClaimedJob): Promise<void> {
    const handler = handlers.get(job.kind)!
    const lost = new AbortController()
    const signal = AbortSignal.any([lost.signal, stopping.signal])
    // Renewals and progress writes go one after the other, so each carries the lease the previous one got.
    let renewals: Promise<unknown> = Promise.resolve()
    const renewInTurn = (progress?: JobProgress) => {
      const turn = renewals.then(async () => {
        if (lost.signal.aborted) return
        if (!(await renew(job, progress))) lost.abort(new Error('the lease on this job ran out'))
      })
      renewals = turn.catch((error) => settings.onError?.(error))
      return turn
    }
    const heartbeat = setInterval(() => void renewInTurn(), (settings.claimSeconds * 1000) / 3)
    let outcome: { ok: true; result: unknown } | { ok: false; error: Error }
    try {
      const result = await handler(job.payload, { jobId: job.id, attempt: job.attempts, signal, progress: (progress) => renewInTurn(progress) })
      outcome = { ok: true, result: result ?? null }
    } catch (error) {
      outcome = { ok: false, error: error instanceof Error ? error : new Error(String(error)) }
    } finally {
      clearInterval(heartbeat)
    }
    await renewals
    if (lost.signal.aborted) return // another runner has it; its attempt decides
    if (outcome.ok) {
      await db.execute(sql`
        update jobs set status = 'done', result = ${JSON.stringify(outcome.result)}::jsonb, finished_at = now(),
          claimed_until = null, last_error = null
        where id = ${job.id} and claimed_until = ${job.claim}::timestamptz`)
      return
    }
    const reason = outcome.error.message.slice(0, 1000)
    const final = job.attempts >= job.max_attempts || (outcome.error instanceof JobFailure && !outcome.error.retry)
    const delay = jobRetryDelayMs(job.attempts, settings.retryBaseMs, settings.retryCapMs)
    if (!final && stopping.signal.aborted) {
      // Stopped by this server's shutdown, not failed: another runner may take it at once, the attempt not counted.
      await db.execute(sql`update jobs set status = 'waiting', claimed_until = null, attempts = attempts - 1
        where id = ${job.id} and claimed_until = ${job.claim}::timestamptz`)
      return
    }
    await db.execute(sql`
      update jobs set
        status = ${final ? 'failed' : 'waiting'},
        last_error = ${reason},
        claimed_until = null,
        finished_at = ${final ? sql`now()` : sql`null`},
        run_after = ${final ? sql`run_after` : sql`now() + make_interval(secs => ${delay / 1000})`}
      where id = ${job.id} and claimed_until = ${job.claim}::timestamptz`)
  }

  async function runOnce(): Promise<boolean> {
    await giveUpAbandoned()
    const job = await claim()
    if (!job) return false
    await runJob(job)
    return true
  }

  function sleep(ms: number): Promise<void> {
    if (woken > 0) {
      woken--
      return Promise.resolve()
    }
    return new Promise((resolve) => {
      const done = () => {
        clearTimeout(timer)
        sleepers.delete(done)
        resolve()
      }
      const timer = setTimeout(done, ms)
      sleepers.add(done)
    })
  }

  async function loop(): Promise<void> {
    while (!stopping.signal.aborted) {
      let found = false
      try {
        found = await runOnce()
      } catch (error) {
        settings.onError?.(error)
      }
      if (!found && !stopping.signal.aborted) await sleep(settings.pollMs)
    }
  }

  return {
    start() {
      loops ??= Array.from({ length: settings.concurrency }, () => loop())
    },
    wake() {
      if (sleepers.size === 0) woken = Math.min(woken + 1, settings.concurrency)
      for (const wakeUp of [...sleepers]) wakeUp()
    },
    runOnce,
    async stop() {
      stopping.abort(new Error('the server is stopping'))
      for (const wakeUp of [...sleepers]) wakeUp()
      await Promise.all(loops ?? [])
    },
  }
}

/** GET /api/jobs/[id]: the job, for the person who asked for it (others: 403; unknown: 404). */
export async function readJob(db: Database, jobId: number, viewerId: number): Promise<JobView | { refused: string }> {
  const [row] = await db.select().from(jobs).where(eq(jobs.id, jobId))
  if (!row) throw createError({ statusCode: 404, statusMessage: 'No such job' })
  if (row.createdBy !== viewerId) return { refused: 'This job was started by someone else' }
  return {
    id: row.id,
    kind: row.kind,
    status: row.status as JobView['status'],
    progress: (row.progress as JobView['progress']) ?? null,
    result: row.status === 'done' ? row.result : null,
    error: row.status === 'failed' || row.lastError ? row.lastError : null,
    attempts: row.attempts,
    maxAttempts: row.maxAttempts,
    createdAt: row.createdAt.toISOString(),
    finishedAt: row.finishedAt?.toISOString() ?? null,
  }
}

// Background work claimed in the database (PDF renders first): a job is a row written in the caller's
// transaction; whichever app server is free claims it with FOR UPDATE SKIP LOCKED (the job runner, issue 8/9).
import { jobs } from '../db/schema'
import type { Executor } from './audited'

/** Queues one job of `kind` through `tx`; answers its id, which the caller may poll for progress. */
export async function enqueueJob(tx: Executor, kind: string, payload: unknown, createdBy?: number, maxAttempts = 3): Promise<number> {
  const [row] = await tx.insert(jobs).values({ kind, payload, createdBy, maxAttempts }).returning({ id: jobs.id })
  return row!.id
}

// The job runner: a runner in this test process, against the test database, for kinds of its own (the test
// app's runner has no handler for them, so it never claims them). GET /api/jobs/[id] reads what it wrote.
import { randomUUID } from 'node:crypto'
import { afterAll, describe, expect, inject, it } from 'vitest'
import postgres from 'postgres'
import { drizzle } from 'drizzle-orm/postgres-js'
import * as schema from '../../server/db/schema'
import { createJobRunner, JobFailure, registerJobHandler } from '../../server/services/jobs'
import { database, demo, signedIn } from './support/client'

const own = postgres(inject('databaseUrl'), { max: 4, onnotice: () => {} })
const db = drizzle(own, { schema })
afterAll(() => own.end())

async function engineerId(): Promise<number> {
  const [row] = await database()`select id from people where email = ${demo.engineer}`
  return row!.id
}

describe('the job runner', () => {
  it('runs a job once, writes its progress and result, and shows them to its owner only', async () => {
    const kind = `test.render-${randomUUID().slice(0, 8)}`
    const seen: number[] = []
    registerJobHandler(kind, async (payload, { progress }) => {
      const { sheets } = payload as { sheets: number }
      for (let done = 1; done <= sheets; done++) {
        seen.push(done)
        await progress({ done, total: sheets, what: `sheet ${done} of ${sheets}` })
      }
      return { pages: sheets * 3 }
    })
    const [job] = await database()`insert into jobs (kind, payload, created_by) values (${kind}, ${database().json({ sheets: 4 })}, ${await engineerId()}) returning id`
    const runner = createJobRunner({ db })
    expect(await runner.runOnce()).toBe(true)
    expect(await runner.runOnce()).toBe(false)
    expect(seen).toEqual([1, 2, 3, 4])
    const engineer = await signedIn(demo.engineer)
    const answer = await engineer.get(`/api/jobs/${job!.id}`)
    expect(answer.status).toBe(200)
    expect(answer.body).toMatchObject({ kind, status: 'done', attempts: 1, progress: { done: 4, total: 4, what: 'sheet 4 of 4' }, result: { pages: 12 }, error: null })
    const checker = await signedIn(demo.checker)
    expect((await checker.get(`/api/jobs/${job!.id}`)).status).toBe(403)
    expect((await engineer.get('/api/jobs/2147483000')).status).toBe(404)
  })

  it('retries a failing job up to its max_attempts, then marks it failed with the error', async () => {
    const kind = `test.flaky-${randomUUID().slice(0, 8)}`
    let calls = 0
    registerJobHandler(kind, async () => {
      calls++
      throw new Error(`render failed on call ${calls}`)
    })
    const [job] = await database()`insert into jobs (kind, payload, max_attempts) values (${kind}, '{}'::jsonb, 3) returning id`
    const runner = createJobRunner({ db, retryBaseMs: 1 })
    for (let attempt = 0; attempt < 3; attempt++) {
      await new Promise((resolve) => setTimeout(resolve, 20))
      expect(await runner.runOnce()).toBe(true)
    }
    await new Promise((resolve) => setTimeout(resolve, 20))
    expect(await runner.runOnce()).toBe(false)
    expect(calls).toBe(3)
    const [row] = await database()`select status, attempts, last_error, finished_at is not null as finished from jobs where id = ${job!.id}`
    expect(row).toMatchObject({ status: 'failed', attempts: 3, last_error: 'render failed on call 3', finished: true })
  })

  it('fails at once on a JobFailure that no retry mends', async () => {
    const kind = `test.bad-${randomUUID().slice(0, 8)}`
    registerJobHandler(kind, async () => {
      throw new JobFailure('no such revision', false)
    })
    const [job] = await database()`insert into jobs (kind, payload) values (${kind}, '{}'::jsonb) returning id`
    await createJobRunner({ db }).runOnce()
    const [row] = await database()`select status, attempts from jobs where id = ${job!.id}`
    expect(row).toMatchObject({ status: 'failed', attempts: 1 })
  })

  it('takes over a job whose runner died (its claim ran out) and finishes it', async () => {
    const kind = `test.orphan-${randomUUID().slice(0, 8)}`
    registerJobHandler(kind, async (_payload, { attempt }) => ({ attempt }))
    // As a killed runner leaves it: running, one attempt counted, the lease past.
    const [job] = await database()`insert into jobs (kind, payload, status, attempts, claimed_until)
      values (${kind}, '{}'::jsonb, 'running', 1, now() - interval '1 second') returning id`
    const [held] = await database()`insert into jobs (kind, payload, status, attempts, claimed_until)
      values (${kind}, '{}'::jsonb, 'running', 1, now() + interval '1 hour') returning id`
    const runner = createJobRunner({ db })
    expect(await runner.runOnce()).toBe(true)
    expect(await runner.runOnce()).toBe(false) // the other is still held by a live lease
    const rows = await database()`select id, status, attempts, result from jobs where id in (${job!.id}, ${held!.id}) order by id`
    expect(rows[0]).toMatchObject({ status: 'done', attempts: 2, result: { attempt: 2 } })
    expect(rows[1]).toMatchObject({ status: 'running', attempts: 1 })
  })
})

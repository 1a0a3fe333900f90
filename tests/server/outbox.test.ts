// The outbox worker of the test app delivers queued rows once each, with their Message-ID; a worker facing a
// dead SMTP port retries with a doubling backoff and delivers once the port answers (an in-process worker on a
// database of its own, so the test app's worker cannot take its rows).
import { execFileSync, spawn, type ChildProcess } from 'node:child_process'
import { randomUUID } from 'node:crypto'
import { fileURLToPath } from 'node:url'
import { afterAll, describe, expect, inject, it } from 'vitest'
import postgres from 'postgres'
import { drizzle } from 'drizzle-orm/postgres-js'
import * as schema from '../../server/db/schema'
import { createOutboxWorker } from '../../server/services/outbox-worker'
import { deliverOverSmtp } from '../../server/services/smtp-delivery'
import { dropDatabase } from '../setup/app'
import { database } from './support/client'

const root = fileURLToPath(new URL('../..', import.meta.url))

interface SinkMessage {
  messageId: string | null
  to: string[]
  subject: string
}

async function sinkMessages(mailApiUrl: string): Promise<SinkMessage[]> {
  return (await (await fetch(`${mailApiUrl}/messages`)).json()) as SinkMessage[]
}

async function until(check: () => Promise<boolean>, tries = 150, ms = 100): Promise<boolean> {
  for (let attempt = 0; attempt < tries; attempt++) {
    if (await check()) return true
    await new Promise((resolve) => setTimeout(resolve, ms))
  }
  return false
}

describe('the outbox worker of the app', () => {
  it('delivers every queued row once, carrying the row’s Message-ID, and records each delivery', async () => {
    const sql = database()
    const batch = randomUUID().slice(0, 8)
    const ids = Array.from({ length: 25 }, (_, index) => `<outbox-${batch}-${index}@loopwright.example.com>`)
    await sql.begin(async (tx) => {
      for (const [index, messageId] of ids.entries()) {
        await tx`insert into outbox (message_id, kind, recipient, subject, body)
          values (${messageId}, 'test.outbox', ${`outbox-${batch}@example.com`}, ${`Outbox test ${batch} ${index}`}, 'A test message.')`
      }
      await tx`select pg_notify('loopwright_outbox', '')`
    })
    const sent = await until(async () => {
      const [row] = await sql`select count(*)::int as n from outbox where message_id = any(${ids}) and sent_at is not null`
      return row!.n === ids.length
    })
    expect(sent).toBe(true)
    // Late copies would arrive after the rows are marked: read the sink after a moment.
    await new Promise((resolve) => setTimeout(resolve, 1000))
    const received = (await sinkMessages(inject('mailApiUrl'))).filter((message) => message.to.includes(`outbox-${batch}@example.com`))
    const copies = new Map<string, number>()
    for (const message of received) copies.set(message.messageId ?? '', (copies.get(message.messageId ?? '') ?? 0) + 1)
    expect(received).toHaveLength(ids.length)
    for (const messageId of ids) expect(copies.get(messageId)).toBe(1)
    const audited = await sql`select detail->>'messageId' as id from audit_events where action = 'mail.delivered' and detail->>'messageId' = any(${ids})`
    expect(audited.map((row) => row.id).sort()).toEqual([...ids].sort())
  })
})

describe('a worker whose SMTP server is down', () => {
  const offset = Number(process.env.LOOPWRIGHT_PORT_OFFSET ?? 0)
  // Clear of every checkout's own ports (2525 to 2582, shifted by offsets up to a few dozen).
  const smtpPort = 2790 + offset
  const httpPort = 2791 + offset
  const url = new URL(inject('databaseUrl'))
  url.pathname = '/loopwright_test_outbox_retry'
  let sink: ChildProcess | undefined
  let own: postgres.Sql | undefined

  afterAll(async () => {
    sink?.kill('SIGTERM')
    await own?.end()
    const admin = postgres(inject('databaseUrl'), { max: 1, onnotice: () => {} })
    await dropDatabase(admin, 'loopwright_test_outbox_retry')
    await admin.end()
  })

  it('retries after a doubling wait, and delivers once when the server answers', async () => {
    const admin = postgres(inject('databaseUrl'), { max: 1, onnotice: () => {} })
    await dropDatabase(admin, 'loopwright_test_outbox_retry')
    await admin.unsafe(`create database "loopwright_test_outbox_retry"`)
    await admin.end()
    execFileSync('node', ['--import', 'tsx', 'scripts/migrate.ts'], { cwd: root, env: { ...process.env, NUXT_DATABASE_URL: url.toString() }, stdio: 'ignore' })
    own = postgres(url.toString(), { max: 4, onnotice: () => {} })
    const db = drizzle(own, { schema })
    const messageId = `<retry-${randomUUID()}@loopwright.example.com>`
    await own`insert into outbox (message_id, kind, recipient, subject, body) values (${messageId}, 'test.retry', 'retry@example.com', 'Retry test', 'Sent at last.')`
    const target = { host: '127.0.0.1', port: smtpPort, from: { name: 'Loopwright', address: 'no-reply@loopwright.example.com' } }
    const worker = createOutboxWorker({ db, deliver: (message, commit) => deliverOverSmtp(target, message, commit), retryBaseMs: 1000, maxAttempts: 5 })

    // Nothing listens on the port: two attempts fail, the second wait twice the first.
    expect(await worker.runOnce()).toBe(1)
    const due = async () => {
      const [row] = await own!`select next_attempt_at <= now() as due from outbox where message_id = ${messageId}`
      return row!.due as boolean
    }
    expect(await worker.runOnce()).toBe(0) // not due yet: the backoff holds it
    expect(await until(due, 50, 50)).toBe(true)
    expect(await worker.runOnce()).toBe(1)
    const failures = await own`select detail from audit_events where action = 'mail.failed' order by id`
    expect(failures.map((row) => row.detail.attempt)).toEqual([1, 2])
    expect(failures.map((row) => row.detail.retryAfterMs)).toEqual([1000, 2000])
    expect(failures.every((row) => row.detail.final === false && /ECONNREFUSED/.test(row.detail.error))).toBe(true)
    const [failed] = await own`select attempts, sent_at, failed_at, last_error from outbox where message_id = ${messageId}`
    expect(failed).toMatchObject({ attempts: 2, sent_at: null, failed_at: null })

    // The server comes up: the third attempt delivers, once.
    sink = spawn('node', ['--import', 'tsx', 'scripts/mail-sink.ts', '--smtp-port', String(smtpPort), '--http-port', String(httpPort), '--dir', `${root}.data/mail/retry-test-${offset}`], { cwd: root, stdio: 'ignore' })
    expect(await until(async () => (await fetch(`http://127.0.0.1:${httpPort}/health`).catch(() => null))?.ok === true)).toBe(true)
    await fetch(`http://127.0.0.1:${httpPort}/messages`, { method: 'DELETE' })
    // The sink's SMTP side may answer a moment after its HTTP side: attempts go on (each after its backoff) until one lands.
    let sent: { attempts: number; sent: boolean } | undefined
    for (let round = 0; round < 3 && !sent?.sent; round++) {
      expect(await until(due, 200, 50)).toBe(true)
      expect(await worker.runOnce()).toBe(1)
      ;[sent] = (await own`select attempts, sent_at is not null as sent from outbox where message_id = ${messageId}`) as unknown as { attempts: number; sent: boolean }[]
    }
    expect(sent!.sent).toBe(true)
    expect(sent!.attempts).toBeGreaterThanOrEqual(3)
    const received = await sinkMessages(`http://127.0.0.1:${httpPort}`)
    expect(received.map((message) => message.messageId)).toEqual([messageId])
    const [delivered] = await own`select detail from audit_events where action = 'mail.delivered'`
    expect(delivered!.detail).toMatchObject({ messageId, attempt: sent!.attempts })
    await worker.stop()
  })

  it('marks a row failed after its last attempt', async () => {
    const db = drizzle(own!, { schema })
    const messageId = `<last-${randomUUID()}@loopwright.example.com>`
    await own!`insert into outbox (message_id, kind, recipient, subject, body) values (${messageId}, 'test.retry', 'last@example.com', 'Last attempt', 'Never sent.')`
    // Port 9 (discard) is closed on loopback here: every attempt is refused.
    const target = { host: '127.0.0.1', port: 9, from: { name: 'Loopwright', address: 'no-reply@loopwright.example.com' } }
    const worker = createOutboxWorker({ db, deliver: (message, commit) => deliverOverSmtp(target, message, commit), retryBaseMs: 50, maxAttempts: 2 })
    await worker.runOnce()
    await new Promise((resolve) => setTimeout(resolve, 120))
    await worker.runOnce()
    const [row] = await own!`select attempts, sent_at, failed_at is not null as failed from outbox where message_id = ${messageId}`
    expect(row).toMatchObject({ attempts: 2, sent_at: null, failed: true })
    const [last] = await own!`select detail from audit_events where action = 'mail.failed' and detail->>'messageId' = ${messageId} order by id desc limit 1`
    expect(last!.detail).toMatchObject({ attempt: 2, final: true })
  })
})

// The crash test: a second app server on the test database, sharing the outbox with the test app; it is killed
// with SIGKILL while it delivers, started again, and every message reaches the sink exactly once (the sink
// keeps each message's Message-ID; a copy would show as a second message with the same id).
import { spawn, type ChildProcess } from 'node:child_process'
import { randomUUID } from 'node:crypto'
import { readFileSync } from 'node:fs'
import { hostname } from 'node:os'
import { fileURLToPath } from 'node:url'
import { afterAll, expect, inject, it } from 'vitest'
import { instanceOf } from '../setup/app'
import { database } from './support/client'

const root = fileURLToPath(new URL('../..', import.meta.url))
const offset = Number(process.env.LOOPWRIGHT_PORT_OFFSET ?? 0)
const port = 3195 + offset
let second: ChildProcess | undefined

function startSecond(): ChildProcess {
  const app = spawn('node', ['.output/server/index.mjs'], {
    cwd: root,
    env: {
      ...process.env,
      NUXT_DATABASE_URL: inject('databaseUrl'),
      NUXT_SESSION_PASSWORD: readFileSync(`${root}.data/session-password`, 'utf8').trim(),
      NUXT_SMTP_HOST: '127.0.0.1',
      NUXT_SMTP_PORT: String(instanceOf('server').smtpPort),
      NUXT_PUBLIC_SITE_URL: `http://127.0.0.1:${port}`,
      // A short lease, so the rows the killed server held are free again within the test.
      NUXT_OUTBOX_CLAIM_SECONDS: '3',
      HOST: '127.0.0.1',
      PORT: String(port),
    },
    stdio: 'ignore',
  })
  return app
}

async function until(check: () => Promise<boolean>, tries: number, ms: number): Promise<boolean> {
  for (let attempt = 0; attempt < tries; attempt++) {
    if (await check()) return true
    await new Promise((resolve) => setTimeout(resolve, ms))
  }
  return false
}

afterAll(() => {
  if (second && second.exitCode === null) second.kill('SIGTERM')
})

it('delivers every message exactly once when an app server is killed while delivering', async () => {
  const sql = database()
  second = startSecond()
  expect(await until(async () => (await fetch(`http://127.0.0.1:${port}/api/_auth/session`).catch(() => null))?.ok === true, 150, 200)).toBe(true)
  const killedWorker = `${hostname()}:${second.pid}`
  const batch = randomUUID().slice(0, 8)
  const recipient = `crash-${batch}@example.com`
  const count = 300
  const ids = Array.from({ length: count }, (_, index) => `<crash-${batch}-${index}@loopwright.example.com>`)
  await sql.begin(async (tx) => {
    for (const [index, messageId] of ids.entries()) {
      await tx`insert into outbox (message_id, kind, recipient, subject, body) values (${messageId}, 'test.crash', ${recipient}, ${`Crash test ${index}`}, 'One of many.')`
    }
    await tx`select pg_notify('loopwright_outbox', '')`
  })
  const deliveredBy = async (worker: string) => {
    const [row] = await sql`select count(*)::int as n from audit_events where action = 'mail.delivered' and detail->>'worker' = ${worker} and detail->>'messageId' like ${`<crash-${batch}-%`}`
    return row!.n as number
  }
  expect(await until(async () => (await deliveredBy(killedWorker)) >= 10, 300, 20)).toBe(true)
  second.kill('SIGKILL')
  await new Promise((resolve) => second!.once('exit', resolve))
  const [state] = await sql`select count(*) filter (where sent_at is not null)::int as sent,
      count(*) filter (where sent_at is null and claimed_until > now())::int as held
    from outbox where message_id = any(${ids})`
  const killedHadSent = await deliveredBy(killedWorker)
  console.log(`crash test: the killed server had delivered ${killedHadSent}; at the kill ${state!.sent} of ${count} were sent and ${state!.held} held by a claim`)

  second = startSecond()
  const allSent = await until(async () => {
    const [row] = await sql`select count(*)::int as n from outbox where message_id = any(${ids}) and sent_at is not null`
    return row!.n === count
  }, 600, 100)
  expect(allSent).toBe(true)
  await new Promise((resolve) => setTimeout(resolve, 1500))
  const messages = (await (await fetch(`${inject('mailApiUrl')}/messages?to=${encodeURIComponent(recipient)}`)).json()) as { messageId: string }[]
  const copies = new Map<string, number>()
  for (const message of messages) copies.set(message.messageId, (copies.get(message.messageId) ?? 0) + 1)
  const twice = [...copies.values()].filter((n) => n > 1).length
  console.log(`crash test: the sink holds ${messages.length} messages, ${copies.size} distinct Message-IDs, ${twice} with more than one copy`)
  expect(messages).toHaveLength(count)
  for (const messageId of ids) expect(copies.get(messageId)).toBe(1)
}, 120_000)

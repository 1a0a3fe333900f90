// A package issue that dies with its app server. A second app server with a database of its own (so the test app's
// job runner never claims its jobs), migrated and seeded with the demo scenario: its package P01 of four sheets is
// approved and issued. First with a Chromium that cannot start: the issue of one sheet on its own, then the package's,
// each fail their job naming the sheet and why, and nothing is stored. Then with the real one: the server is killed with SIGKILL while it renders, started again, and the
// job is claimed again when its lease runs out: the package is issued exactly once, nothing half issued, and every
// e-mail reaches the sink exactly once (the sink keeps each Message-ID; a copy would show as a second message).
import { execFileSync, spawn, type ChildProcess } from 'node:child_process'
import { randomUUID } from 'node:crypto'
import { openSync, readFileSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import postgres from 'postgres'
import { CreateBucketCommand, S3Client } from '@aws-sdk/client-s3'
import { afterAll, beforeAll, expect, inject, it } from 'vitest'
import { demoPassword } from '../../scripts/demo-people'
import { processTree } from '../../scripts/process-memory'
import { appArgs, appEnv, dropDatabase, instanceOf } from '../setup/app'
import { demo } from './support/client'

const root = fileURLToPath(new URL('../..', import.meta.url))
const offset = Number(process.env.LOOPWRIGHT_PORT_OFFSET ?? 0)
const port = 3194 + offset
const baseUrl = `http://127.0.0.1:${port}`
const crashDatabase = new URL(inject('databaseUrl'))
crashDatabase.pathname = '/loopwright_test_package_crash'
const databaseUrl = crashDatabase.toString()
// The server tests' object store, a bucket of this test's own (the seed attaches the demo step test to FIC-214-03).
const store = inject('objectStore')
const bucket = 'loopwright-test-package-crash'
const storeEnv = {
  NUXT_OBJECT_STORE_ENDPOINT: store.endpoint,
  NUXT_OBJECT_STORE_REGION: store.region,
  NUXT_OBJECT_STORE_BUCKET: bucket,
  NUXT_OBJECT_STORE_ACCESS_KEY_ID: store.accessKeyId,
  NUXT_OBJECT_STORE_SECRET_ACCESS_KEY: store.secretAccessKey,
  NUXT_OBJECT_STORE_FORCE_PATH_STYLE: 'true',
}
let sql: postgres.Sql
let app: ChildProcess | undefined

async function recreate(create: boolean) {
  const admin = new URL(databaseUrl)
  admin.pathname = '/postgres'
  const server = postgres(admin.toString(), { max: 1, onnotice: () => {} })
  try {
    await dropDatabase(server, 'loopwright_test_package_crash')
    if (create) await server.unsafe('create database "loopwright_test_package_crash"')
  } finally {
    await server.end()
  }
}

function env(chromium?: string): NodeJS.ProcessEnv {
  return {
    ...process.env,
    ...appEnv,
    NUXT_DATABASE_URL: databaseUrl,
    ...storeEnv,
    NUXT_SESSION_PASSWORD: readFileSync(`${root}.data/session-password`, 'utf8').trim(),
    NUXT_SMTP_HOST: '127.0.0.1',
    NUXT_SMTP_PORT: String(instanceOf('server').smtpPort),
    NUXT_PUBLIC_SITE_URL: baseUrl,
    // A short lease, so the job the killed server held is free again within the test; retries a moment apart.
    NUXT_JOBS_CLAIM_SECONDS: '3',
    NUXT_JOBS_RETRY_BASE_MS: '200',
    // Idle runners look again twice a second (the restarted server finds the dead one's job as soon as its lease ends).
    NUXT_JOBS_POLL_MS: '500',
    NUXT_OUTBOX_POLL_MS: '500',
    ...(chromium ? { LOOPWRIGHT_CHROMIUM: chromium } : {}),
    HOST: '127.0.0.1',
    PORT: String(port),
  }
}

async function until(check: () => Promise<boolean>, tries: number, ms: number): Promise<boolean> {
  for (let attempt = 0; attempt < tries; attempt++) {
    if (await check()) return true
    await new Promise((resolve) => setTimeout(resolve, ms))
  }
  return false
}

async function startApp(chromium?: string) {
  const log = openSync(`${root}.data/test-app-package-crash.log`, 'a')
  app = spawn('node', appArgs, { cwd: root, env: env(chromium), stdio: ['ignore', log, log] })
  expect(await until(async () => (await fetch(`${baseUrl}/api/_auth/session`).catch(() => null))?.ok === true, 150, 200)).toBe(true)
}
/** The processes under `pid` (its Chromium and that browser's own), the app itself left out. */
const descendants = (pid: number): number[] => processTree(pid).filter((child) => child !== pid)

async function stopApp(signal: NodeJS.Signals) {
  if (!app || app.exitCode !== null) return
  const browser = descendants(app.pid!)
  const exited = new Promise((resolve) => app!.once('exit', resolve))
  app.kill(signal)
  await exited
  // A SIGKILLed server leaves its Chromium behind: end it too, as the machine's init would on a real crash.
  for (const pid of browser) {
    try {
      process.kill(pid, 'SIGKILL')
    } catch {
      // already gone with its parent
    }
  }
}

/** A signed-in person on the second server (a cookie jar of one). */
async function as(email: string) {
  let cookie = ''
  const call = async (method: string, path: string, body?: unknown) => {
    const answer = await fetch(`${baseUrl}${path}`, {
      method,
      headers: { ...(body === undefined ? {} : { 'content-type': 'application/json' }), ...(cookie ? { cookie } : {}) },
      body: body === undefined ? undefined : JSON.stringify(body),
    })
    const set = answer.headers.get('set-cookie')
    if (set) cookie = set.split(';')[0]!
    const text = await answer.text()
    return { status: answer.status, body: text ? JSON.parse(text) : null }
  }
  expect((await call('POST', '/api/auth/login', { email, password: demoPassword })).status).toBe(200)
  return call
}

let packageId: number
let sheetIds: number[]
let title: string
let body: { purpose: string; password: string; sheets: Array<{ sheetId: number; version: number }> }
let engineer: Awaited<ReturnType<typeof as>>

beforeAll(async () => {
  await recreate(true)
  const s3 = new S3Client({
    endpoint: store.endpoint,
    region: store.region,
    forcePathStyle: true,
    credentials: { accessKeyId: store.accessKeyId, secretAccessKey: store.secretAccessKey },
  })
  await s3.send(new CreateBucketCommand({ Bucket: bucket })).catch(() => undefined)
  s3.destroy()
  const seedEnv = { ...process.env, NUXT_DATABASE_URL: databaseUrl, ...storeEnv }
  // Piped, so a failing migration or seed shows its own message in the test's error.
  execFileSync('node', ['--import', 'tsx', 'scripts/migrate.ts'], { cwd: root, env: seedEnv, stdio: 'pipe' })
  execFileSync('node', ['--import', 'tsx', 'scripts/seed.ts'], { cwd: root, env: seedEnv, stdio: 'pipe' })
  sql = postgres(databaseUrl, { max: 2, onnotice: () => {} })
  title = `Crash test ${randomUUID().slice(0, 8)}`
  const [pack] = await sql`update packages set title = ${title} where number = 'P01' returning id`
  packageId = pack!.id
  // Each sheet's newest revision and its version (the seed saved FIC-214-03 again after fitting its step test).
  const heads = await sql`select distinct on (s.id) s.id, r.version from sheets s join sheet_revisions r on r.sheet_id = s.id
    where s.package_id = ${packageId} order by s.id, r.revision_index desc`
  sheetIds = heads.map((row) => row.id as number)
  const versions = new Map(heads.map((row) => [row.id as number, row.version as number]))
  expect(sheetIds).toHaveLength(4)
  // A Chromium that cannot start: every render fails.
  await startApp('/nonexistent/chromium')
  engineer = await as(demo.engineer)
  const checker = await as(demo.checker)
  for (const id of sheetIds) {
    const version = versions.get(id)!
    expect((await engineer('POST', `/api/sheets/${id}/submit`, { version })).status).toBe(200)
    expect((await checker('POST', `/api/sheets/${id}/approve`, { version, password: demoPassword })).status).toBe(200)
  }
  body = { purpose: 'review', password: demoPassword, sheets: sheetIds.map((sheetId) => ({ sheetId, version: versions.get(sheetId)! })) }
}, 120_000)

afterAll(async () => {
  await stopApp('SIGTERM')
  await sql?.end()
  await recreate(false)
})

const storedCounts = async () => {
  const [row] = await sql`select
      (select count(*)::int from package_issues where package_id = ${packageId}) as issues,
      (select count(*)::int from revision_pdfs p join sheet_revisions r on r.id = p.revision_id where r.sheet_id = any(${sheetIds})) as pdfs,
      (select count(*)::int from sheet_revisions where sheet_id = any(${sheetIds}) and status = 'issued') as issued,
      (select count(*)::int from signatures s join sheet_revisions r on r.id = s.revision_id where r.sheet_id = any(${sheetIds}) and s.meaning = 'issued') as signatures,
      (select count(*)::int from outbox where kind = 'sheet.issued' and subject like ${`%${title}%`}) as mails`
  return row!
}

it('fails a single sheet’s issue whose render cannot be made, naming the sheet and why, and stores nothing', async () => {
  const sheetId = sheetIds[0]!
  const [sheet] = await sql`select number from sheets where id = ${sheetId}`
  const queued = await engineer('POST', `/api/sheets/${sheetId}/issue`, { version: body.sheets[0]!.version, purpose: 'review', password: demoPassword })
  expect(queued.status).toBe(202)
  let job: any
  expect(await until(async () => ['done', 'failed'].includes((job = (await engineer('GET', `/api/jobs/${queued.body.jobId}`)).body).status), 300, 100)).toBe(true)
  expect(job.status).toBe('failed')
  expect(job.attempts).toBe(3)
  expect(job.error).toMatch(new RegExp(`^Sheet ${sheet!.number} could not be printed: .+`))
  expect(await storedCounts()).toEqual({ issues: 0, pdfs: 0, issued: 0, signatures: 0, mails: 0 })
  expect((await sql`select count(*)::int as n from outbox where kind = 'sheet.issued' and subject like ${`%${sheet!.number}%`}`)[0]!.n).toBe(0)
  const [revision] = await sql`select status, label from sheet_revisions where sheet_id = ${sheetId} order by revision_index desc limit 1`
  expect(revision).toEqual({ status: 'approved', label: null })
  console.log(`sheet render failure: "${job.error.slice(0, 160)}"`)
}, 60_000)

it('fails a render that cannot be made naming the sheet and why, and stores nothing', async () => {
  const queued = await engineer('POST', `/api/packages/${packageId}/issue`, body)
  expect(queued.status).toBe(202)
  let job: any
  expect(await until(async () => ['done', 'failed'].includes((job = (await engineer('GET', `/api/jobs/${queued.body.jobId}`)).body).status), 300, 100)).toBe(true)
  expect(job.status).toBe('failed')
  expect(job.attempts).toBe(3)
  const [first] = await sql`select number from sheets where id = ${sheetIds[0]!}`
  expect(job.error).toMatch(new RegExp(`^Sheet 1 of 4, ${first!.number}, could not be printed: .+`))
  expect(await storedCounts()).toEqual({ issues: 0, pdfs: 0, issued: 0, signatures: 0, mails: 0 })
  console.log(`package render failure: "${job.error.slice(0, 160)}"`)
}, 60_000)

it('issues the package exactly once when its app server is killed mid-render', async () => {
  await stopApp('SIGTERM')
  await startApp()
  engineer = await as(demo.engineer)
  const queued = await engineer('POST', `/api/packages/${packageId}/issue`, body)
  expect(queued.status).toBe(202)
  const jobId = queued.body.jobId as number
  // Killed once the first sheet is printed and the second is being rendered.
  const midRender = await until(async () => {
    const [row] = await sql`select progress from jobs where id = ${jobId}`
    return (row?.progress?.done ?? 0) >= 1
  }, 600, 20)
  expect(midRender).toBe(true)
  const [atKill] = await sql`select status, attempts, progress from jobs where id = ${jobId}`
  await stopApp('SIGKILL')
  const killed = await storedCounts()
  console.log(`package crash test: killed at ${JSON.stringify(atKill!.progress)} (attempt ${atKill!.attempts}); stored then ${JSON.stringify(killed)}`)
  expect(killed).toEqual({ issues: 0, pdfs: 0, issued: 0, signatures: 0, mails: 0 })

  const restartedAt = Date.now()
  await startApp()
  const done = await until(async () => {
    const [row] = await sql`select status from jobs where id = ${jobId}`
    return row!.status === 'done' || row!.status === 'failed'
  }, 600, 100)
  expect(done).toBe(true)
  const [job] = await sql`select status, attempts, progress, last_error from jobs where id = ${jobId}`
  expect(job, JSON.stringify(job)).toMatchObject({ status: 'done', attempts: 2, progress: { done: 4, total: 4, what: 'issued' } })
  const after = await storedCounts()
  const issuedAfterMs = Date.now() - restartedAt
  const contacts = await sql`select email from people p join projects j on j.organisation_id = p.organisation_id
    join packages k on k.project_id = j.id where k.id = ${packageId} and p.active and 'client' = any(p.roles)`
  expect(after).toEqual({ issues: 1, pdfs: 4, issued: 4, signatures: 4, mails: contacts.length })
  expect(contacts.length).toBeGreaterThan(0)

  // Every mail of the issue delivered, then read back from the sink: one copy of each Message-ID.
  const ids = (await sql`select message_id from outbox where kind = 'sheet.issued' and subject like ${`%${title}%`}`).map((row) => row.message_id as string)
  expect(await until(async () => (await sql`select count(*)::int as n from outbox where message_id = any(${ids}) and sent_at is not null`)[0]!.n === ids.length, 300, 100)).toBe(true)
  await new Promise((resolve) => setTimeout(resolve, 1500))
  let inSink = 0
  for (const { email } of contacts) {
    const messages = (await (await fetch(`${inject('mailApiUrl')}/messages?to=${encodeURIComponent(email)}`)).json()) as { messageId: string; subject: string }[]
    const ours = messages.filter((message) => message.subject.includes(title))
    expect(ours).toHaveLength(1)
    expect(ids).toContain(ours[0]!.messageId)
    inSink += ours.length
  }
  console.log(`package crash test: after restart job ${jobId} done on attempt ${job!.attempts}, ${issuedAfterMs} ms after the restart began; stored ${JSON.stringify(after)}; ${ids.length} mails queued, ${inSink} in the sink, each Message-ID once`)
}, 120_000)

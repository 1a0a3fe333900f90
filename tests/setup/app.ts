// Global set-up of the server and browser tests (tests/vitest.config.ts): PostgreSQL, the test mail sink and the
// test object store up, a fresh database loopwright_test migrated and seeded, an emptied bucket, the built app on
// 127.0.0.1:3199.
// Vitest calls this once per project and runs the projects side by side, so each project gets an instance of
// its own, and one project's rows never show up in the other's pages:
//   e2e (the values of DEVELOPERS.md)  app 127.0.0.1:3199, database loopwright_test,        sink 2526/2581, object store 4569
//   server                             app 127.0.0.1:3198, database loopwright_test_server, sink 2527/2582, object store 4570
// Teardown stops the app and drops its database.
import { execFileSync, spawn, type ChildProcess } from 'node:child_process'
import { existsSync, openSync, readFileSync, writeFileSync, rmSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import postgres from 'postgres'
import { CreateBucketCommand, DeleteObjectsCommand, ListObjectsV2Command, S3Client } from '@aws-sdk/client-s3'
import type { TestProject } from 'vitest/node'

/**
 * How the built app is started, by scripts/serve and here: its Node flags and environment, in scripts/lib/app-start.json.
 * `--max-semi-space-size=4`: V8's young generation grew to its default 16 MiB semi-spaces (32 MiB of new space,
 * v8.getHeapSpaceStatistics) while the app rendered PDFs; at 4 MiB the app's RSS in scripts/bench-pdf.ts was about
 * 25 MiB lower (204 to 214 against 220 to 246 MiB), its CPU per render within the machine's noise.
 * `MALLOC_ARENA_MAX=2`: glibc's malloc keeps an arena for each thread that allocates (the app's, its calculation
 * workers', libuv's), and memory freed in them stayed with the process. With two, in scripts/bench-package.ts, the
 * app's RSS when a 20-sheet package's sheets were printed was 199 to 204 MiB against 313 to 319 (runs taken in turn),
 * the package's peak PSS 505 to 530 MiB against 622, the app's CPU 3.42 to 4.30 s against 3.44.
 */
const startOfApp = JSON.parse(readFileSync(fileURLToPath(new URL('../../scripts/lib/app-start.json', import.meta.url)), 'utf8')) as { flags: string[]; env: Record<string, string> }
export const appArgs: string[] = [...startOfApp.flags, '.output/server/index.mjs']
/** The environment the app is started with, added to its own (scripts/lib/app-start.json). */
export const appEnv: Record<string, string> = startOfApp.env

const root = fileURLToPath(new URL('../..', import.meta.url))

export interface Instance {
  name: string
  appPort: number
  database: string
  smtpPort: number
  mailHttpPort: number
  /** The object store of this instance (scripts/object-store) and its bucket. */
  objectStorePort: number
  bucket: string
}

/** LOOPWRIGHT_PORT_OFFSET shifts every port, as in scripts/lib/common.sh. */
const offset = Number(process.env.LOOPWRIGHT_PORT_OFFSET ?? 0)

export function instanceOf(project: string): Instance {
  // The editor's browser benchmark (scripts/bench-editor.ts): an app and database of its own, no mail sent.
  if (project === 'bench') return { name: 'bench', appPort: 3197 + offset, database: 'loopwright_bench', smtpPort: 2526 + offset, mailHttpPort: 2581 + offset, objectStorePort: 4569 + offset, bucket: 'loopwright-bench' }
  if (project === 'server') {
    return {
      name: 'server',
      appPort: 3198 + offset,
      database: 'loopwright_test_server',
      smtpPort: 2527 + offset,
      mailHttpPort: 2582 + offset,
      // A store of its own: tests/server/attachments.test.ts stops it to see a failed store leave nothing behind.
      objectStorePort: 4570 + offset,
      bucket: 'loopwright-test-server',
    }
  }
  return { name: 'e2e', appPort: 3199 + offset, database: 'loopwright_test', smtpPort: 2526 + offset, mailHttpPort: 2581 + offset, objectStorePort: 4569 + offset, bucket: 'loopwright-test' }
}

export interface Running {
  instance: Instance
  env: Record<string, string>
  app: ChildProcess
  pidFile: string
}

function run(command: string, args: string[], env: Record<string, string> = {}) {
  execFileSync(command, args, { cwd: root, env: { ...process.env, ...env }, stdio: ['ignore', 'pipe', 'inherit'] })
}

/** The app's environment of `scripts/app-env test`, moved to the instance's database and ports. */
function testEnv(instance: Instance): Record<string, string> {
  const lines = execFileSync(`${root}scripts/app-env`, ['test'], { encoding: 'utf8' }).trim().split('\n')
  const env = Object.fromEntries(lines.map((line) => [line.slice(0, line.indexOf('=')), line.slice(line.indexOf('=') + 1)]))
  const databaseUrl = new URL(env.NUXT_DATABASE_URL!)
  databaseUrl.pathname = `/${instance.database}`
  return {
    ...env,
    NUXT_DATABASE_URL: databaseUrl.toString(),
    NUXT_SMTP_PORT: String(instance.smtpPort),
    NUXT_OBJECT_STORE_ENDPOINT: `http://127.0.0.1:${instance.objectStorePort}`,
    NUXT_OBJECT_STORE_BUCKET: instance.bucket,
    NUXT_PUBLIC_SITE_URL: `http://127.0.0.1:${instance.appPort}`,
    HOST: '127.0.0.1',
    PORT: String(instance.appPort),
    // The tests' engine stops at 4 s, not the product's 10 s: the heavy loop of the time-limit tests
    // (tests/server/support/loops.ts) measured 21.8 s on an earlier machine and 8.8 s on a later one of the same
    // kind, so at 10 s it finished in time there and three tests failed; at 4 s it is stopped on both.
    ...(instance.name === 'bench' ? {} : { NUXT_CALC_TIME_LIMIT_MS: '4000' }),
  }
}

/**
 * Drops database `name` (through `sql`, a connection to another database), ending the sessions on it. WITH (FORCE)
 * ends them, but PostgreSQL refuses the whole drop (42501, "must be a member of the role whose process is being
 * terminated") for a session it may not end: seen once at a bench's stop, after a load of writes, most likely an
 * autovacuum worker (it has no role). Such a session ends by itself or is cancelled within moments, so the drop is
 * tried again for up to five seconds.
 */
export async function dropDatabase(sql: postgres.Sql, name: string) {
  for (let attempt = 1; ; attempt++) {
    try {
      await sql.unsafe(`drop database if exists "${name}" with (force)`)
      return
    } catch (error) {
      if ((error as { code?: string }).code !== '42501' || attempt >= 20) throw error
      await new Promise((resolve) => setTimeout(resolve, 250))
    }
  }
}

async function recreateDatabase(databaseUrl: string, create: boolean) {
  const url = new URL(databaseUrl)
  const name = url.pathname.slice(1)
  url.pathname = '/postgres'
  const sql = postgres(url.toString(), { max: 1, onnotice: () => {} })
  try {
    await dropDatabase(sql, name)
    if (create) await sql.unsafe(`create database "${name}"`)
  } finally {
    await sql.end()
  }
}

/** The instance's bucket as the app sees it (NUXT_OBJECT_STORE_*). */
function objectStoreClient(env: Record<string, string>): { client: S3Client; bucket: string } {
  const client = new S3Client({
    endpoint: env.NUXT_OBJECT_STORE_ENDPOINT,
    region: env.NUXT_OBJECT_STORE_REGION,
    forcePathStyle: true,
    credentials: { accessKeyId: env.NUXT_OBJECT_STORE_ACCESS_KEY_ID!, secretAccessKey: env.NUXT_OBJECT_STORE_SECRET_ACCESS_KEY! },
  })
  return { client, bucket: env.NUXT_OBJECT_STORE_BUCKET! }
}

/** Made when missing, and emptied: the tests list it to see what was kept. */
async function emptyBucket(env: Record<string, string>) {
  const { client, bucket } = objectStoreClient(env)
  await client.send(new CreateBucketCommand({ Bucket: bucket })).catch(() => undefined)
  for (;;) {
    const listed = await client.send(new ListObjectsV2Command({ Bucket: bucket }))
    const keys = (listed.Contents ?? []).map((object) => ({ Key: object.Key! }))
    if (keys.length === 0) break
    await client.send(new DeleteObjectsCommand({ Bucket: bucket, Delete: { Objects: keys } }))
  }
  client.destroy()
}

/** An app left behind by an interrupted run would hold the port. */
function stopLeftover(pidFile: string) {
  if (!existsSync(pidFile)) return
  const pid = Number(readFileSync(pidFile, 'utf8'))
  try {
    process.kill(pid, 'SIGTERM')
  } catch {
    // already gone
  }
  rmSync(pidFile, { force: true })
}

async function waitForApp(baseUrl: string, app: ChildProcess, logFile: string) {
  const deadline = Date.now() + 60_000
  while (Date.now() < deadline) {
    if (app.exitCode !== null) break
    try {
      const answer = await fetch(`${baseUrl}/api/_auth/session`)
      if (answer.ok) return
    } catch {
      // not listening yet
    }
    await new Promise((resolve) => setTimeout(resolve, 200))
  }
  throw new Error(`the app did not start on ${baseUrl}; see ${logFile}`)
}

export async function start(instance: Instance): Promise<Running> {
  const pidFile = `${root}.data/test-app-${instance.name}.pid`
  const logFile = `${root}.data/test-app-${instance.name}.log`
  run(`${root}scripts/db`, ['start'])
  run(`${root}scripts/mail-sink`, ['start', String(instance.smtpPort), String(instance.mailHttpPort)])
  run(`${root}scripts/object-store`, ['start', String(instance.objectStorePort), instance.bucket])
  const env = testEnv(instance)
  await emptyBucket(env)
  await recreateDatabase(env.NUXT_DATABASE_URL!, true)
  run('node', ['--import', 'tsx', 'scripts/migrate.ts'], env)
  run('node', ['--import', 'tsx', 'scripts/seed.ts'], env)
  await fetch(`http://127.0.0.1:${instance.mailHttpPort}/messages`, { method: 'DELETE' })
  stopLeftover(pidFile)
  const log = openSync(logFile, 'w')
  const app = spawn('node', appArgs, {
    cwd: root,
    env: { ...process.env, ...appEnv, ...env },
    stdio: ['ignore', log, log],
  })
  writeFileSync(pidFile, String(app.pid))
  await waitForApp(`http://127.0.0.1:${instance.appPort}`, app, logFile)
  return { instance, env, app, pidFile }
}

export async function stop(running: Running) {
  const { app, env } = running
  if (app.exitCode === null) {
    const exited = new Promise((resolve) => app.once('exit', resolve))
    app.kill('SIGTERM')
    await Promise.race([exited, new Promise((resolve) => setTimeout(resolve, 5000))])
    if (app.exitCode === null) app.kill('SIGKILL')
  }
  rmSync(running.pidFile, { force: true })
  await recreateDatabase(env.NUXT_DATABASE_URL!, false)
}

export default async function setup(project: TestProject) {
  const running = await start(instanceOf(project.name))
  project.provide('baseUrl', `http://127.0.0.1:${running.instance.appPort}`)
  project.provide('mailApiUrl', `http://127.0.0.1:${running.instance.mailHttpPort}`)
  project.provide('databaseUrl', running.env.NUXT_DATABASE_URL!)
  project.provide('objectStore', {
    port: running.instance.objectStorePort,
    endpoint: running.env.NUXT_OBJECT_STORE_ENDPOINT!,
    region: running.env.NUXT_OBJECT_STORE_REGION!,
    bucket: running.instance.bucket,
    accessKeyId: running.env.NUXT_OBJECT_STORE_ACCESS_KEY_ID!,
    secretAccessKey: running.env.NUXT_OBJECT_STORE_SECRET_ACCESS_KEY!,
  })
  return () => stop(running)
}

// Global set-up of the server and browser tests (tests/vitest.config.ts): PostgreSQL and the test mail sink up,
// a fresh database loopwright_test migrated and seeded, the built app on 127.0.0.1:3199.
// Vitest calls this once per project; both calls share one app (counted on globalThis, the same process),
// and the last teardown stops it and drops the database.
import { execFileSync, spawn, type ChildProcess } from 'node:child_process'
import { existsSync, openSync, readFileSync, writeFileSync, rmSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import postgres from 'postgres'
import type { TestProject } from 'vitest/node'

const root = fileURLToPath(new URL('../..', import.meta.url))
const pidFile = `${root}.data/test-app.pid`
const logFile = `${root}.data/test-app.log`
const mailApiUrl = 'http://127.0.0.1:2581'

interface Running {
  env: Record<string, string>
  app: ChildProcess
  users: number
}
const key = Symbol.for('loopwright.tests.app')
const shared = globalThis as unknown as Record<symbol, Promise<Running> | undefined>

function run(command: string, args: string[], env: Record<string, string> = {}) {
  execFileSync(command, args, { cwd: root, env: { ...process.env, ...env }, stdio: ['ignore', 'pipe', 'inherit'] })
}

function testEnv(): Record<string, string> {
  const lines = execFileSync(`${root}scripts/app-env`, ['test'], { encoding: 'utf8' }).trim().split('\n')
  return Object.fromEntries(lines.map((line) => [line.slice(0, line.indexOf('=')), line.slice(line.indexOf('=') + 1)]))
}

async function recreateDatabase(databaseUrl: string, create: boolean) {
  const url = new URL(databaseUrl)
  const name = url.pathname.slice(1)
  url.pathname = '/postgres'
  const sql = postgres(url.toString(), { max: 1, onnotice: () => {} })
  try {
    await sql.unsafe(`drop database if exists "${name}" with (force)`)
    if (create) await sql.unsafe(`create database "${name}"`)
  } finally {
    await sql.end()
  }
}

/** An app left behind by an interrupted run would hold the port. */
function stopLeftover() {
  if (!existsSync(pidFile)) return
  const pid = Number(readFileSync(pidFile, 'utf8'))
  try {
    process.kill(pid, 'SIGTERM')
  } catch {
    // already gone
  }
  rmSync(pidFile, { force: true })
}

async function waitForApp(baseUrl: string, app: ChildProcess) {
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

async function start(): Promise<Running> {
  run(`${root}scripts/db`, ['start'])
  run(`${root}scripts/mail-sink`, ['start', '2526', '2581'])
  const env = testEnv()
  await recreateDatabase(env.NUXT_DATABASE_URL!, true)
  run('node', ['--import', 'tsx', 'scripts/migrate.ts'], env)
  run('node', ['--import', 'tsx', 'scripts/seed.ts'], env)
  await fetch(`${mailApiUrl}/messages`, { method: 'DELETE' })
  stopLeftover()
  const log = openSync(logFile, 'w')
  const app = spawn('node', ['.output/server/index.mjs'], {
    cwd: root,
    env: { ...process.env, ...env },
    stdio: ['ignore', log, log],
  })
  writeFileSync(pidFile, String(app.pid))
  await waitForApp(`http://${env.HOST}:${env.PORT}`, app)
  return { env, app, users: 0 }
}

async function stop(running: Running) {
  const { app, env } = running
  if (app.exitCode === null) {
    const exited = new Promise((resolve) => app.once('exit', resolve))
    app.kill('SIGTERM')
    await Promise.race([exited, new Promise((resolve) => setTimeout(resolve, 5000))])
    if (app.exitCode === null) app.kill('SIGKILL')
  }
  rmSync(pidFile, { force: true })
  await recreateDatabase(env.NUXT_DATABASE_URL!, false)
}

export default async function setup(project: TestProject) {
  shared[key] ??= start()
  const running = await shared[key]!
  running.users += 1
  project.provide('baseUrl', `http://${running.env.HOST}:${running.env.PORT}`)
  project.provide('mailApiUrl', mailApiUrl)
  project.provide('databaseUrl', running.env.NUXT_DATABASE_URL!)
  return async () => {
    running.users -= 1
    if (running.users > 0) return
    shared[key] = undefined
    await stop(running)
  }
}

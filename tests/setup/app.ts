// Global set-up of the server and browser tests (tests/vitest.config.ts): PostgreSQL and the test mail sink up,
// a fresh database loopwright_test migrated and seeded, the built app on 127.0.0.1:3199.
// Vitest calls this once per project and runs the projects side by side, so each project gets an instance of
// its own, and one project's rows never show up in the other's pages:
//   e2e (the values of DEVELOPERS.md)  app 127.0.0.1:3199, database loopwright_test,        sink 2526/2581
//   server                             app 127.0.0.1:3198, database loopwright_test_server, sink 2527/2582
// Teardown stops the app and drops its database.
import { execFileSync, spawn, type ChildProcess } from 'node:child_process'
import { existsSync, openSync, readFileSync, writeFileSync, rmSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import postgres from 'postgres'
import type { TestProject } from 'vitest/node'

const root = fileURLToPath(new URL('../..', import.meta.url))

export interface Instance {
  name: string
  appPort: number
  database: string
  smtpPort: number
  mailHttpPort: number
}

/** LOOPWRIGHT_PORT_OFFSET shifts every port, as in scripts/lib/common.sh. */
const offset = Number(process.env.LOOPWRIGHT_PORT_OFFSET ?? 0)

export function instanceOf(project: string): Instance {
  // The editor's browser benchmark (scripts/bench-editor.ts): an app and database of its own, no mail sent.
  if (project === 'bench') return { name: 'bench', appPort: 3197 + offset, database: 'loopwright_bench', smtpPort: 2526 + offset, mailHttpPort: 2581 + offset }
  if (project === 'server') {
    return {
      name: 'server',
      appPort: 3198 + offset,
      database: 'loopwright_test_server',
      smtpPort: 2527 + offset,
      mailHttpPort: 2582 + offset,
    }
  }
  return { name: 'e2e', appPort: 3199 + offset, database: 'loopwright_test', smtpPort: 2526 + offset, mailHttpPort: 2581 + offset }
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
    NUXT_PUBLIC_SITE_URL: `http://127.0.0.1:${instance.appPort}`,
    HOST: '127.0.0.1',
    PORT: String(instance.appPort),
  }
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
  const env = testEnv(instance)
  await recreateDatabase(env.NUXT_DATABASE_URL!, true)
  run('node', ['--import', 'tsx', 'scripts/migrate.ts'], env)
  run('node', ['--import', 'tsx', 'scripts/seed.ts'], env)
  await fetch(`http://127.0.0.1:${instance.mailHttpPort}/messages`, { method: 'DELETE' })
  stopLeftover(pidFile)
  const log = openSync(logFile, 'w')
  const app = spawn('node', ['.output/server/index.mjs'], {
    cwd: root,
    env: { ...process.env, ...env },
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
  return () => stop(running)
}

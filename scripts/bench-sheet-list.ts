/**
 * The project sheet list with 10,000 sheets (issue 7): part of `npm run bench` (scripts/bench.ts runs it).
 *
 * In a scratch database `loopwright_bench` of this checkout's PostgreSQL (created, migrated, and dropped at the
 * end), one project gets 10,000 sheets, each with one revision holding a real sheet document and the engine's real
 * result for it (the demo pressure loop's, about 28 KB stored each), spread over 20 packages, the six statuses,
 * five editors and a year of edits. Then GET /api/projects/[id]/sheets's own service call (listProjectSheets:
 * the page query and the count, side by side) is timed for every sort, each filter and searches, as the server
 * runs it. Each case: 5 warm-up calls, then the median of 31. The plan of each page query is printed
 * (EXPLAIN ANALYZE) with the indexes it used.
 *
 * Target, printed PASS or FAIL as measured: every case's median at most 50 ms (a list page that answers well within
 * a tenth of a second on this shared 2-core machine). The bench exits 0 either way.
 */
import { execFileSync } from 'node:child_process'
import { readFileSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import postgres from 'postgres'
import { drizzle } from 'drizzle-orm/postgres-js'
import * as schema from '../server/db/schema'
import { listProjectSheets } from '../server/services/sheets'
import { sheetsQuerySchema, sheetTemplateSchema } from '../shared/schemas/sheets'
import { loopFileOf } from '../shared/schemas/sheet'
import { evaluateLoopText } from '../shared/calc/index'
import { ENGINE_VERSION } from '../shared/calc/version'
import { dropDatabase } from '../tests/setup/app'

const SHEETS = 10_000
const TARGET_MS = 50
const root = fileURLToPath(new URL('..', import.meta.url))

function appDatabaseUrl(): string {
  const lines = execFileSync(`${root}scripts/app-env`, ['serve'], { encoding: 'utf8' }).trim().split('\n')
  const line = lines.find((l) => l.startsWith('NUXT_DATABASE_URL='))!
  return line.slice('NUXT_DATABASE_URL='.length)
}

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b)
  return s[s.length >> 1]!
}

execFileSync(`${root}scripts/db`, ['start'], { stdio: ['ignore', 'ignore', 'inherit'] })
const url = new URL(appDatabaseUrl())
const admin = new URL(url)
admin.pathname = '/postgres'
url.pathname = '/loopwright_bench'
const server = postgres(admin.toString(), { max: 1, onnotice: () => {} })
await dropDatabase(server, 'loopwright_bench')
await server.unsafe('create database loopwright_bench')
execFileSync(process.execPath, ['--import', 'tsx', `${root}scripts/migrate.ts`], { env: { ...process.env, NUXT_DATABASE_URL: url.toString() }, stdio: 'ignore' })

const sql = postgres(url.toString(), { max: 4, onnotice: () => {} })
const db = drizzle(sql, { schema })

try {
  const template = sheetTemplateSchema.parse(JSON.parse(readFileSync(`${root}sheets/pi-pressure-loop.json`, 'utf8')))
  const result = evaluateLoopText(JSON.stringify(loopFileOf(template.document)))

  const started = performance.now()
  await sql`insert into firm_settings (id, name, sheet_numbering, paper_size) values (1, 'Cobalt Ridge Engineering', '{project}-{seq:02}', 'A4')`
  const [org] = await sql`insert into organisations (name) values ('Northmere Water District') returning id`
  const [project] = await sql`insert into projects (number, name, organisation_id) values ('NWD-214', 'Hollins Booster Station upgrade', ${org!.id}) returning id`
  const editors = await sql`insert into people (name, email, roles)
    select 'Bench Engineer ' || i, 'bench' || i || '@example.com', array['engineer'] from generate_series(1, 5) i returning id`
  const viewer = { id: editors[0]!.id as number, roles: ['engineer' as const] }
  await sql`insert into project_members (project_id, person_id, role) select ${project!.id}, id, 'engineer' from people`
  await sql`insert into packages (project_id, number, title, created_by)
    select ${project!.id}, 'P' || lpad(i::text, 2, '0'), 'Package ' || i, ${viewer.id} from generate_series(1, 20) i`
  // Titles and tags from small word lists, so searches hit a realistic share of rows.
  await sql`
    with words as (select array['Discharge pressure', 'Clearwell level', 'Chlorine dosing flow', 'Filter outlet flow',
      'Backwash tank level', 'Wash water pressure', 'Alum dosing flow', 'Reservoir level', 'Pump speed', 'Header pressure'] as titles,
      array['PIC', 'LIC', 'FIC', 'SIC', 'TIC'] as tags)
    insert into sheets (project_id, package_id, number, title, loop_tag, created_by, current_prepared_by, current_edited_by)
    select ${project!.id},
      case when i % 4 = 0 then null else (select id from packages order by id offset (i % 20) limit 1) end,
      'NWD-214-' || case when i < 10 then '0' || i else i::text end,
      titles[1 + i % 10] || ', unit ' || (i / 10),
      tags[1 + i % 5] || '-' || (200 + i % 50) || '-' || lpad((i % 97)::text, 2, '0'),
      ${viewer.id}, ${viewer.id}, ${viewer.id}
    from generate_series(1, ${SHEETS}) i, words`
  await sql`
    insert into sheet_revisions (sheet_id, revision_index, status, document, version, result, engine_version, prepared_by, edited_by, edited_at)
    select s.id, 0,
      (array['draft', 'draft', 'draft', 'in check', 'returned', 'approved', 'issued', 'superseded'])[1 + s.id % 8],
      ${JSON.stringify(template.document)}::jsonb, 1 + s.id % 7, ${JSON.stringify(result)}::jsonb, ${ENGINE_VERSION},
      ${viewer.id}, (select id from people order by id offset (s.id % 5) limit 1),
      now() - (s.id * 7919 % 525600) * interval '1 minute'
    from sheets s`
  // Autovacuum would do this within a minute of such a load; the bench does not wait for it.
  await sql`vacuum analyze`
  const [size] = await sql`select pg_size_pretty(pg_total_relation_size('sheet_revisions')) as revisions, pg_size_pretty(pg_total_relation_size('sheets')) as sheets`
  const [somePackage] = await sql`select id from packages order by id offset 3 limit 1`
  console.log(`\nSheet list benchmark: ${SHEETS.toLocaleString('en')} sheets in one project, each with a real document and result`)
  console.log(`  filled in ${((performance.now() - started) / 1000).toFixed(1)} s; sheets ${size!.sheets}, sheet_revisions ${size!.revisions} (with TOAST)`)

  const cases: Array<[string, Record<string, string>]> = [
    ['number, first page', {}],
    ['number, page 250 of 500', { page: '250' }],
    ['number, descending', { dir: 'desc' }],
    ['title', { sort: 'title' }],
    ['status', { sort: 'status' }],
    ['last change, newest first', { sort: 'updatedAt', dir: 'desc' }],
    ['status = in check', { status: 'in check' }],
    ['one package', { packageId: String(somePackage!.id) }],
    ['search "level" (title)', { q: 'level' }],
    ['search "FIC-23" (tag)', { q: 'FIC-23' }],
    ['search "NWD-214-99" (number)', { q: 'NWD-214-99' }],
    ['search, status, last change', { q: 'pressure', status: 'draft', sort: 'updatedAt', dir: 'desc' }],
  ]
  const clientViewer = { id: viewer.id, roles: ['client' as const] }
  await sql`insert into project_members (project_id, person_id, role) values (${project!.id}, ${viewer.id}, 'client')`

  const pad = (s: string, n: number) => s.padStart(n)
  console.log(`  ${'case'.padEnd(34)}${pad('rows', 7)}${pad('median ms', 11)}${pad('max ms', 9)}  page query plan (indexes used)`)
  const verdicts: boolean[] = []
  for (const [name, raw] of [...cases, ['as a client: issued only', {}] as [string, Record<string, string>]]) {
    const query = sheetsQuerySchema.parse(raw)
    const who = name.startsWith('as a client') ? clientViewer : viewer
    const call = () => listProjectSheets(db as never, project!.id, query, who)
    for (let i = 0; i < 5; i++) await call()
    const times: number[] = []
    let total = 0
    for (let i = 0; i < 31; i++) {
      const t0 = performance.now()
      const page = await call()
      times.push(performance.now() - t0)
      total = 'total' in page ? page.total : -1
    }
    // The page query is the first one each call logs after the membership checks: find it by its LIMIT.
    const captured: Array<{ query: string; params: unknown[] }> = []
    const capturing = drizzle(sql, { schema, logger: { logQuery: (q, p) => captured.push({ query: q, params: p }) } })
    await listProjectSheets(capturing as never, project!.id, query, who)
    const pageQuery = captured.find((c) => /\blimit\b/i.test(c.query) && /order by/i.test(c.query))!
    const plan = await sql.unsafe(`explain (analyze, format json) ${pageQuery.query}`, pageQuery.params as never[])
    const indexes = new Set<string>()
    const walk = (node: Record<string, unknown>) => {
      if (typeof node['Index Name'] === 'string') indexes.add(node['Index Name'])
      for (const child of (node.Plans as Array<Record<string, unknown>> | undefined) ?? []) walk(child)
    }
    const top = (plan[0] as { 'QUERY PLAN': Array<{ Plan: Record<string, unknown> }> })['QUERY PLAN'][0]!.Plan
    walk(top)
    const m = median(times)
    verdicts.push(m <= TARGET_MS)
    console.log(`  ${name.padEnd(34)}${pad(String(total), 7)}${pad(m.toFixed(1), 11)}${pad(Math.max(...times).toFixed(1), 9)}  ${[...indexes].join(', ') || 'no index'}`)
  }
  const failed = verdicts.filter((pass) => !pass).length
  console.log(`  target: every median at most ${TARGET_MS} ms  ${failed === 0 ? 'PASS' : `FAIL (${failed} case(s) over)`}`)
} finally {
  await sql.end()
  await dropDatabase(server, 'loopwright_bench')
  await server.end()
}

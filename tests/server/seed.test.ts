import { execFileSync } from 'node:child_process'
import { readFileSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import { describe, expect, inject, it } from 'vitest'
import { database } from './support/client'
import { demoPeople } from '../../scripts/demo-people'

const root = fileURLToPath(new URL('../..', import.meta.url))
const emails = demoPeople.map((person) => person.email)

async function demoRows() {
  const sql = database()
  return {
    firm: await sql`select id, name, sheet_numbering, paper_size, default_cautions from firm_settings`,
    organisations: await sql`select id, name, created_at from organisations where name = 'Northmere Water District'`,
    projects: await sql`select id, number, name, organisation_id, created_at from projects where number = 'NWD-214'`,
    people: await sql`select id, name, email, password_hash, roles, organisation_id, created_at from people
      where email in ${sql(emails)} order by id`,
    // The memberships the seed made: other test files add people (and roles) of their own to NWD-214 meanwhile.
    members: (
      await sql`select m.project_id, m.person_id, m.role, d.email from project_members m
        join projects p on p.id = m.project_id join people d on d.id = m.person_id
        where p.number = 'NWD-214' order by m.person_id, m.role`
    ).filter((row) => demoPeople.some((person) => person.email === row.email && person.projectRole === row.role)),
    packages: await sql`select k.id, k.number, k.title, k.created_by from packages k
      join projects p on p.id = k.project_id where p.number = 'NWD-214' and k.title = 'Hollins Booster Station control loops'`,
    sheets: await sql`select s.id, s.number, s.title, s.loop_tag, s.package_id, s.created_by, r.revision_index, r.status, r.version,
        r.prepared_by, r.result->>'stability' as stability, r.engine_version
      from sheets s join sheet_revisions r on r.sheet_id = s.id join packages k on k.id = s.package_id
      where k.title = 'Hollins Booster Station control loops' order by s.id`,
  }
}

describe('seed', () => {
  it('holds the demo scenario of product.md', async () => {
    const rows = await demoRows()
    expect(rows.firm[0]!.name).toBe('Cobalt Ridge Engineering')
    expect(rows.projects[0]).toMatchObject({ number: 'NWD-214', name: 'Hollins Booster Station upgrade' })
    expect(rows.people.map((person) => person.email).sort()).toEqual([...emails].sort())
    expect(rows.people.every((person) => String(person.password_hash).startsWith('$scrypt$'))).toBe(true)
    expect(rows.members.map((member) => member.role).sort()).toEqual(['checker', 'client', 'engineer', 'engineer'])
  })

  it('gives NWD-214 the package of its four demo loops as computed drafts prepared by the demo engineer', async () => {
    const rows = await demoRows()
    const engineer = rows.people.find((person) => person.email === 'tomas.okafor@example.com')!
    expect(rows.packages).toHaveLength(1)
    expect(rows.sheets.map((sheet) => sheet.loop_tag)).toEqual(['PIC-214-01', 'LIC-214-02', 'FIC-214-03', 'LIC-214-04'])
    expect(rows.sheets.map((sheet) => sheet.number)).toEqual(['NWD-214-01', 'NWD-214-02', 'NWD-214-03', 'NWD-214-04'])
    for (const sheet of rows.sheets) {
      // The dosing-flow sheet is saved once more by the seed: its step test fitted and its controller tuned.
      const version = sheet.loop_tag === 'FIC-214-03' ? 2 : 1
      expect(sheet).toMatchObject({ package_id: rows.packages[0]!.id, revision_index: 0, status: 'draft', version, prepared_by: engineer.id, created_by: engineer.id })
      // Each computed by the engine at seeding; all four demo loops are designed stable.
      expect(sheet.stability).toBe('stable')
    }
    // The booster pressure sheet holds the demo loop of the contract's example (shared/examples/booster-pressure.json).
    const [booster] = await database()`select r.document->'loop'->'blocks' as blocks, r.result->'closed_loop'->'den' as den
      from sheet_revisions r join sheets s on s.id = r.sheet_id where s.loop_tag = 'PIC-214-01'`
    const example = JSON.parse(readFileSync(new URL('../../../shared/examples/booster-pressure.json', import.meta.url), 'utf8'))
    expect(booster!.blocks).toEqual(example.blocks)
    const expected = JSON.parse(readFileSync(new URL('../../../shared/examples/expected/booster-pressure.json', import.meta.url), 'utf8'))
    // Reference: shared/examples/expected (sympy exact reduction), to the contract's 1e-12 relative.
    expected.closed_loop.den.forEach((value: number, i: number) => expect(booster!.den[i]).toBeCloseTo(value, 10))
  })

  it('attaches an invented step test to the dosing-flow sheet, fitted into its plant and tuned by SIMC', async () => {
    const [row] = await database()`select a.name, a.sha256, a.type, r.document as document from attachments a
      join sheet_revisions r on r.id = a.revision_id join sheets s on s.id = r.sheet_id where s.loop_tag = 'FIC-214-03'`
    expect(row).toMatchObject({ name: 'FIC-214-03-step-test-INVENTED.csv', type: 'text/csv' })
    const { loop, parameters } = row!.document
    // The record was made from K = 1.45 %/%, τ = 6.4 s, θ = 2.2 s (scripts/seed.ts): least squares within 2 %, θ within a sample.
    expect(Math.abs(loop.parameters.Kp.value / 1.45 - 1)).toBeLessThan(0.02)
    expect(Math.abs(loop.parameters.T.value / 6.4 - 1)).toBeLessThan(0.02)
    expect(Math.abs(loop.parameters.L.value - 2.2)).toBeLessThan(0.1)
    const source = (symbol: string) => parameters.find((p: { symbol: string }) => p.symbol === symbol).source as string
    expect(source('Kp')).toContain(`FIC-214-03-step-test-INVENTED.csv (SHA-256 ${row!.sha256.slice(0, 12)})`)
    expect(source('Kc')).toContain('SIMC PI')
    // SIMC PI with τc = θ (Skogestad 2003): Kc = τ/(2Kθ), to the 4 figures the seed writes.
    const simc = loop.parameters.T.value / (2 * loop.parameters.Kp.value * loop.parameters.L.value)
    expect(Math.abs(loop.parameters.Kc.value / simc - 1)).toBeLessThan(0.002)
    expect(loop.parameters.Ti.value).toBe(Math.min(loop.parameters.T.value, 8 * loop.parameters.L.value))
  })

  it('gives the same rows when run a second time', async () => {
    const before = await demoRows()
    execFileSync('node', ['--import', 'tsx', 'scripts/seed.ts'], {
      cwd: root,
      env: { ...process.env, NUXT_DATABASE_URL: inject('databaseUrl') },
      stdio: 'pipe',
    })
    expect(await demoRows()).toEqual(before)
    const [counts] = await database()`select
      (select count(*)::int from organisations where name = 'Northmere Water District') as organisations,
      (select count(*)::int from projects where number = 'NWD-214') as projects,
      (select count(*)::int from firm_settings) as firms,
      (select count(*)::int from packages where title = 'Hollins Booster Station control loops') as packages`
    expect(counts).toEqual({ organisations: 1, projects: 1, firms: 1, packages: 1 })
  })
})

import { execFileSync } from 'node:child_process'
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
    members: await sql`select m.project_id, m.person_id, m.role from project_members m
      join projects p on p.id = m.project_id where p.number = 'NWD-214' order by m.person_id, m.role`,
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
      (select count(*)::int from firm_settings) as firms`
    expect(counts).toEqual({ organisations: 1, projects: 1, firms: 1 })
  })
})

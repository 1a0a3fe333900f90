// A search term is matched as written (issue 6, finding 7): `%` and `_` are LIKE wildcards in PostgreSQL, and
// without escaping a search for "%" matched every row. Each list's search is checked on rows made for the test.
import { beforeAll, describe, expect, it } from 'vitest'
import { database, demo, signedIn, unique, type Client } from './support/client'

describe('search terms with LIKE wildcards match only themselves', () => {
  let admin: Client
  const tag = unique('Wq')
  const percent = `${tag} 50% Reservoir Trust`
  const underscore = `${tag} Lake_Side Utility`
  const plain = `${tag} Lakeside Utility`
  beforeAll(async () => {
    admin = await signedIn(demo.admin)
    for (const name of [percent, underscore, plain]) expect((await admin.post('/api/organisations', { name })).status).toBe(201)
  })

  const names = async (route: string, q: string) =>
    ((await admin.get(`${route}?q=${encodeURIComponent(q)}&pageSize=100`)).body.items as Array<{ name: string }>).map((row) => row.name).sort()

  it('organisations: % and _ are searched for as characters', async () => {
    expect(await names('/api/organisations', `${tag} 50%`)).toEqual([percent])
    expect(await names('/api/organisations', '%')).toEqual([percent])
    expect(await names('/api/organisations', `${tag} Lake_`)).toEqual([underscore])
    expect(await names('/api/organisations', `${tag}%Utility`)).toEqual([])
  })

  it('people, projects and the audit trail escape them too', async () => {
    const person = unique('Wp')
    expect((await admin.post('/api/people/invite', { name: `${person} 100%`, email: `${person.toLowerCase()}@example.com`, roles: ['engineer'] })).status).toBe(201)
    expect(await names('/api/people', '%')).toEqual([`${person} 100%`])
    // No project number may hold % (projectSchema), so "_" stands for any character only if unescaped.
    const number = `${tag.toUpperCase()}_9`
    const [northmere] = await database()`select id from organisations where name = 'Northmere Water District'`
    expect((await admin.post('/api/projects', { number, name: 'Wildcard sample', organisationId: northmere!.id })).status).toBe(201)
    expect((await admin.get(`/api/projects?q=${encodeURIComponent(`${tag.toUpperCase()}_9`)}`)).body.total).toBe(1)
    expect((await admin.get(`/api/projects?q=${encodeURIComponent(`${tag.toUpperCase()}x9`)}`)).body.total).toBe(0)
    expect((await admin.get(`/api/projects?q=${encodeURIComponent(`${tag.toUpperCase()}_`)}`)).body.total).toBe(1)
    expect((await admin.get(`/api/projects?q=${encodeURIComponent('_'.repeat(tag.length + 2))}`)).body.total).toBe(0)
    const everything = await admin.get('/api/audit?pageSize=1')
    const audit = await admin.get(`/api/audit?q=${encodeURIComponent('%')}&pageSize=100`)
    expect(audit.status).toBe(200)
    expect(audit.body.total).toBeLessThan(everything.body.total)
    type Row = { action: string; path: string | null; actorName: string | null; actorEmail: string | null }
    expect(audit.body.items.filter((row: Row) => ![row.action, row.path, row.actorName, row.actorEmail].some((text) => text?.includes('%')))).toEqual([])
  })
})

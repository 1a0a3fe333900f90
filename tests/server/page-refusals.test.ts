// POST /api/audit/page-refusals (issue 6, finding 7): the roles recorded are the session's, not what the body
// claims, and one person may write at most 20 rows a minute (429 with Retry-After after that).
import { beforeAll, describe, expect, it } from 'vitest'
import { database, demo, newPerson, signedIn, type Client } from './support/client'

describe('page refusals from the screen', () => {
  let admin: Client
  beforeAll(async () => {
    admin = await signedIn(demo.admin)
  })

  it('records the roles of the session, whatever the body claims', async () => {
    const person = await newPerson(admin, ['checker'])
    const checker = await signedIn(person.email, person.password)
    const answer = await checker.post('/api/audit/page-refusals', { page: '/people', roles: ['admin', 'client'] })
    expect(answer.status).toBe(204)
    const [row] = await database()`select actor_id, status, detail from audit_events where action = 'page.refused' and actor_id = ${person.id}`
    expect(row).toMatchObject({ actor_id: person.id, status: 403 })
    expect(row!.detail).toEqual({ page: '/people', holds: ['checker'] })
  })

  it('refuses the 21st refusal of a person within a minute with 429 and Retry-After, and writes no row for it', async () => {
    const person = await newPerson(admin, ['client'], { organisationId: (await database()`select id from organisations where name = 'Northmere Water District'`)[0]!.id })
    const client = await signedIn(person.email, person.password)
    const statuses: number[] = []
    for (let i = 0; i < 25; i++) statuses.push((await client.post('/api/audit/page-refusals', { page: `/audit/${i}` })).status)
    expect(statuses.slice(0, 20)).toEqual(Array(20).fill(204))
    expect(statuses.slice(20)).toEqual(Array(5).fill(429))
    const last = await client.post('/api/audit/page-refusals', { page: '/audit' })
    expect(last.status).toBe(429)
    const retryAfter = Number(last.headers.get('retry-after'))
    expect(retryAfter).toBeGreaterThanOrEqual(1)
    expect(retryAfter).toBeLessThanOrEqual(60)
    const [rows] = await database()`select count(*)::int as n from audit_events where action = 'page.refused' and actor_id = ${person.id}`
    expect(rows!.n).toBe(20)
    // Another person's allowance is their own.
    expect((await (await signedIn(demo.checker)).post('/api/audit/page-refusals', { page: '/people' })).status).toBe(204)
  })
})

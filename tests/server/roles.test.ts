import { describe, expect, it } from 'vitest'
import { Client, database, demo, signedIn } from './support/client'

async function lastRefusal(path: string) {
  const [event] = await database()`select actor_id, status, method, path, detail from audit_events
    where action = 'access.refused' and path = ${path} order by id desc limit 1`
  return event
}

describe('roles', () => {
  it('answers 401 to a signed-out request and records it', async () => {
    const before = await database()`select count(*)::int as n from audit_events where action = 'access.refused' and path = '/api/organisations'`
    expect((await new Client().get('/api/organisations')).status).toBe(401)
    const after = await database()`select count(*)::int as n from audit_events where action = 'access.refused' and path = '/api/organisations'`
    expect(after[0]!.n).toBe(before[0]!.n + 1)
    expect(await lastRefusal('/api/organisations')).toMatchObject({ actor_id: null, status: 401, method: 'GET' })
  })

  it('answers 403 to an engineer asking for the people list, recording who asked', async () => {
    const engineer = await signedIn(demo.engineer)
    const answer = await engineer.get('/api/people')
    expect(answer.status).toBe(403)
    const [person] = await database()`select id from people where email = ${demo.engineer}`
    expect(await lastRefusal('/api/people')).toMatchObject({ actor_id: person!.id, status: 403, detail: { needs: ['admin'] } })
  })

  it('keeps the audit trail from clients and checkers, and project creation from non-admins', async () => {
    expect((await (await signedIn(demo.client)).get('/api/audit')).status).toBe(403)
    expect((await (await signedIn(demo.checker)).post('/api/projects', { number: 'X-1', name: 'Nope', organisationId: 1 })).status).toBe(403)
    expect((await (await signedIn(demo.engineer)).patch('/api/firm', { name: 'Other' })).status).toBe(403)
  })

  it('lets an admin read the refusals in the audit trail, newest first', async () => {
    await new Client().get('/api/people')
    const answer = await (await signedIn(demo.admin)).get('/api/audit?dir=desc&q=access.refused&pageSize=5')
    expect(answer.status).toBe(200)
    expect(answer.body.items.length).toBeGreaterThan(0)
    expect(answer.body.items.every((row: { action: string }) => row.action === 'access.refused')).toBe(true)
    const times = answer.body.items.map((row: { at: string }) => Date.parse(row.at))
    expect([...times].sort((a, b) => b - a)).toEqual(times)
  })

  it('shows every signed-in person the firm settings, and lets only an admin change them', async () => {
    const firm = await (await signedIn(demo.client)).get('/api/firm')
    expect(firm.status).toBe(200)
    expect(firm.body.name).toBe('Cobalt Ridge Engineering')
    const admin = await signedIn(demo.admin)
    const changed = await admin.patch('/api/firm', { ...firm.body, paperSize: 'Letter' })
    expect(changed.body.paperSize).toBe('Letter')
    expect((await admin.patch('/api/firm', { ...firm.body, paperSize: 'B5' })).status).toBe(400)
    expect((await admin.patch('/api/firm', firm.body)).body.paperSize).toBe(firm.body.paperSize)
  })
})

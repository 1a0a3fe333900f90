import { beforeAll, describe, expect, it } from 'vitest'
import { demoPeople } from '../../scripts/demo-people'
import { database, demo, newPerson, signedIn, unique, type Client } from './support/client'

describe('organisations, projects and members', () => {
  let admin: Client
  let organisationId: number
  let projectId: number
  const number = unique('T-').toUpperCase()
  const ids: Record<string, number> = {}

  beforeAll(async () => {
    admin = await signedIn(demo.admin)
    for (const [key, email] of Object.entries(demo)) {
      const [row] = await database()`select id from people where email = ${email}`
      ids[key] = row!.id
    }
  })

  it('creates a client organisation, and refuses the same name twice', async () => {
    const name = unique('Estuary Utilities ')
    const created = await admin.post('/api/organisations', { name })
    expect(created.status).toBe(201)
    expect(created.body).toMatchObject({ name, projectCount: 0, contactCount: 0 })
    organisationId = created.body.id
    expect((await admin.post('/api/organisations', { name })).status).toBe(409)
    const listed = await admin.get(`/api/organisations?q=${encodeURIComponent(name)}`)
    expect(listed.body.total).toBe(1)
  })

  it('creates a project, and refuses a taken number', async () => {
    const created = await admin.post('/api/projects', { number, name: 'Intake screen renewal', organisationId })
    expect(created.status).toBe(201)
    expect(created.body).toMatchObject({ number, organisationId, memberCount: 0, members: [] })
    projectId = created.body.id
    expect((await admin.post('/api/projects', { number, name: 'Again', organisationId })).status).toBe(409)
    expect((await admin.post('/api/projects', { number: 'NWD-214', name: 'Again', organisationId })).status).toBe(409)
  })

  it('adds a member whose global role matches, and refuses one whose does not', async () => {
    const added = await admin.post(`/api/projects/${projectId}/members`, { personId: ids.engineer, role: 'engineer' })
    expect(added.status).toBe(201)
    expect(added.body.members).toEqual([{ personId: ids.engineer, name: 'Tomás Okafor', email: demo.engineer, role: 'engineer' }])

    const notChecker = await admin.post(`/api/projects/${projectId}/members`, { personId: ids.engineer, role: 'checker' })
    expect(notChecker.status).toBe(400)
    expect(notChecker.body.data.issues.fieldErrors.role).toEqual(['This person does not hold the checker role'])

    // Dana belongs to Northmere, not to this project's client.
    const otherClient = await admin.post(`/api/projects/${projectId}/members`, { personId: ids.client, role: 'client' })
    expect(otherClient.status).toBe(400)
    expect((await admin.post(`/api/projects/${projectId}/members`, { personId: ids.engineer, role: 'engineer' })).status).toBe(409)
  })

  it('admits a client contact of the project’s own client', async () => {
    const contact = await newPerson(admin, ['client'], { organisationId })
    const added = await admin.post(`/api/projects/${projectId}/members`, { personId: contact.id, role: 'client' })
    expect(added.status).toBe(201)
    expect(added.body.memberCount).toBe(2)
    const mine = await (await signedIn(contact.email, contact.password)).get('/api/projects')
    expect(mine.body.items.map((row: { number: string }) => row.number)).toEqual([number])
  })

  it('shows a project to its members and refuses others with 403, audited', async () => {
    expect((await (await signedIn(demo.engineer)).get(`/api/projects/${projectId}`)).status).toBe(200)
    const checker = await signedIn(demo.checker)
    expect((await checker.get(`/api/projects/${projectId}`)).status).toBe(403)
    const [event] = await database()`select status, actor_id from audit_events
      where action = 'access.refused' and path = ${`/api/projects/${projectId}`} order by id desc limit 1`
    expect(event).toEqual({ status: 403, actor_id: ids.checker })
    const theirs = await checker.get('/api/projects')
    expect(theirs.body.items.map((row: { number: string }) => row.number)).toEqual(['NWD-214'])
  })

  it('lists NWD-214 for its client contact with the demo team', async () => {
    const client = await signedIn(demo.client)
    const [nwd] = (await client.get('/api/projects')).body.items
    expect(nwd).toMatchObject({ number: 'NWD-214', name: 'Hollins Booster Station upgrade', organisationName: 'Northmere Water District' })
    const detail = await client.get(`/api/projects/${nwd.id}`)
    // The demo team (other test files add people of their own to NWD-214 while this runs).
    const seeded = new Set(demoPeople.filter((person) => person.projectRole).map((person) => `${person.email} ${person.projectRole}`))
    const demoTeam = detail.body.members.filter((member: { email: string; role: string }) => seeded.has(`${member.email} ${member.role}`))
    expect(demoTeam.map((member: { role: string }) => member.role).sort()).toEqual(['checker', 'client', 'engineer', 'engineer'])
    // Counted while other files add their own people: at least the demo team's four.
    expect(nwd.memberCount).toBeGreaterThanOrEqual(4)
  })

  it('removes a member, who then loses sight of the project', async () => {
    const removed = await admin.delete(`/api/projects/${projectId}/members/${ids.engineer}`)
    expect(removed.status).toBe(200)
    expect(removed.body.members.map((member: { personId: number }) => member.personId)).not.toContain(ids.engineer)
    expect((await (await signedIn(demo.engineer)).get(`/api/projects/${projectId}`)).status).toBe(403)
    expect((await admin.delete(`/api/projects/${projectId}/members/${ids.engineer}`)).status).toBe(404)
  })
})

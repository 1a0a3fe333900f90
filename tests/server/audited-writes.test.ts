// A write and its audit record are one transaction (issue 6, finding 3): when the audit row cannot be written,
// the change it records is rolled back. The fault is injected with plain SQL: a trigger on audit_events that
// raises on inserting one action (a 500 is acceptable for this one injected server fault).
import { afterEach, beforeAll, describe, expect, it } from 'vitest'
import { database, demo, outboxRowsTo, signedIn, unique, type Client } from './support/client'
import { Kit } from './support/routes'

async function failAuditOf(action: string) {
  await database().unsafe(`
    create or replace function test_refuse_audit() returns trigger language plpgsql as $$
    begin
      if new.action = tg_argv[0] then raise exception 'test: audit write of % refused', new.action; end if;
      return new;
    end $$`)
  await database().unsafe(`create trigger test_refuse_audit before insert on audit_events for each row execute function test_refuse_audit('${action}')`)
}

async function count(query: Promise<Array<{ n: number }>>): Promise<number> {
  return (await query)[0]!.n
}

describe('every write commits with its audit record, or not at all', () => {
  let admin: Client
  let kit: Kit
  beforeAll(async () => {
    admin = await signedIn(demo.admin)
    kit = new Kit(admin)
  })
  afterEach(async () => {
    await database().unsafe('drop trigger if exists test_refuse_audit on audit_events')
  })

  it('a client organisation', async () => {
    const name = unique('Rollback Utility ')
    await failAuditOf('organisation.created')
    expect((await admin.post('/api/organisations', { name })).status).toBe(500)
    expect(await count(database()`select count(*)::int as n from organisations where name = ${name}`)).toBe(0)
  })

  it('a project', async () => {
    const number = unique('RB-').toUpperCase()
    await failAuditOf('project.created')
    const answer = await admin.post('/api/projects', { number, name: 'Rollback sample', organisationId: await kit.demoOrganisationId() })
    expect(answer.status).toBe(500)
    expect(await count(database()`select count(*)::int as n from projects where number = ${number}`)).toBe(0)
  })

  it('a member added, and a member removed', async () => {
    const projectId = await kit.newProject()
    const personId = await kit.newInvitedPerson(['engineer'])
    await failAuditOf('project.member-added')
    expect((await admin.post(`/api/projects/${projectId}/members`, { personId, role: 'engineer' })).status).toBe(500)
    expect(await count(database()`select count(*)::int as n from project_members where project_id = ${projectId}`)).toBe(0)

    await database().unsafe('drop trigger test_refuse_audit on audit_events')
    expect((await admin.post(`/api/projects/${projectId}/members`, { personId, role: 'engineer' })).status).toBe(201)
    await failAuditOf('project.member-removed')
    expect((await admin.delete(`/api/projects/${projectId}/members/${personId}`)).status).toBe(500)
    expect(await count(database()`select count(*)::int as n from project_members where project_id = ${projectId}`)).toBe(1)
  })

  it('the firm settings', async () => {
    const before = (await admin.get('/api/firm')).body
    await failAuditOf('firm.updated')
    expect((await admin.patch('/api/firm', { ...before, sheetNumbering: '{project}/rollback/{seq}' })).status).toBe(500)
    const [row] = await database()`select sheet_numbering from firm_settings where id = 1`
    expect(row!.sheet_numbering).toBe(before.sheetNumbering)
  })

  it('a person invited (and no e-mail queued for them: the outbox row rolls back with the person)', async () => {
    const email = `${unique('rb')}@example.com`
    await failAuditOf('person.invited')
    expect((await admin.post('/api/people/invite', { name: 'Rollback Sample', email, roles: ['engineer'] })).status).toBe(500)
    expect(await count(database()`select count(*)::int as n from people where email = ${email}`)).toBe(0)
    expect(await outboxRowsTo(email)).toEqual([])
  })

  it('a person changed', async () => {
    const id = await kit.newInvitedPerson()
    await failAuditOf('person.deactivated')
    expect((await admin.patch(`/api/people/${id}`, { active: false, name: 'Rollback Renamed' })).status).toBe(500)
    const [row] = await database()`select active, name from people where id = ${id}`
    expect(row!.active).toBe(true)
    expect(row!.name).not.toBe('Rollback Renamed')
  })

  it('an invitation accepted', async () => {
    const token = await kit.newInvitationToken()
    await failAuditOf('invitation.accepted')
    const answer = await admin.request('POST', `/api/invitations/${token}`, { password: 'rollback-sample-1', confirm: 'rollback-sample-1' })
    expect(answer.status).toBe(500)
    await database().unsafe('drop trigger test_refuse_audit on audit_events')
    // The token was not spent: it still opens.
    expect((await admin.get(`/api/invitations/${token}`)).status).toBe(200)
  })
})

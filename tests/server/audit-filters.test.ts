// The admins' filters of the audit trail (issue 8, item 11): by project, sheet, person (who acted) and action,
// each event placed on its project and sheet by the database on insert (drizzle/0007_audit_event_place_trigger.sql),
// with the client address it came from.
import { beforeAll, describe, expect, it } from 'vitest'
import { Client, database, demo, signedIn } from './support/client'
import { newSheet, theCast, type Cast } from './support/sheets'

let cast: Cast
let sheetId: number
let otherSheetId: number
let engineerId: number
let checkerId: number

beforeAll(async () => {
  cast = await theCast()
  sheetId = (await newSheet(cast.engineer, cast.demoProjectId, { title: 'Audit filter sheet', loopTag: 'PIC-214-60' })).id
  otherSheetId = (await newSheet(cast.outsider, cast.otherProjectId, { title: 'Audit filter sheet elsewhere', loopTag: 'PIC-888-60' })).id
  const [engineer] = await database()`select id from people where email = ${demo.engineer}`
  const [checker] = await database()`select id from people where email = ${demo.checker}`
  engineerId = engineer!.id
  checkerId = checker!.id
  // A refusal on the sheet (a client asks for a draft) and one on the other project's sheet (not a member).
  expect((await cast.client.get(`/api/sheets/${sheetId}`)).status).toBe(403)
  expect((await cast.checker.get(`/api/sheets/${otherSheetId}`)).status).toBe(403)
})

const list = (query: string) => cast.admin.get(`/api/audit?pageSize=100&dir=desc&${query}`)

describe('audit trail filters', () => {
  it('places each event on its project and sheet, from its subject, its detail or its path', async () => {
    const rows = await database()`select action, project_id, sheet_id from audit_events where sheet_id = ${sheetId} order by id`
    // sheet.created has the sheet as its subject; the client's refusal names the sheet in its detail and path.
    expect(rows.map((row) => row.action)).toEqual(['sheet.created', 'access.refused'])
    expect(rows.every((row) => row.project_id === cast.demoProjectId)).toBe(true)
    const [refusal] = await database()`select project_id, sheet_id from audit_events where action = 'access.refused' and path = ${`/api/sheets/${otherSheetId}`} order by id desc limit 1`
    expect(refusal).toEqual({ project_id: cast.otherProjectId, sheet_id: otherSheetId })
    // An event with a path naming a project, but no sheet: a refused list of the other project's sheets.
    expect((await cast.engineer.get(`/api/projects/${cast.otherProjectId}/sheets`)).status).toBe(403)
    const [listRefusal] = await database()`select project_id, sheet_id from audit_events where path = ${`/api/projects/${cast.otherProjectId}/sheets`} order by id desc limit 1`
    expect(listRefusal).toEqual({ project_id: cast.otherProjectId, sheet_id: null })
    // An id of no row places nothing (a refused request may name any number).
    await database()`insert into audit_events (action, path, detail) values ('test.unplaced', '/api/sheets/2147483000', '{"projectId": 2147483001}')`
    const [unplaced] = await database()`select project_id, sheet_id from audit_events where action = 'test.unplaced' order by id desc limit 1`
    expect(unplaced).toEqual({ project_id: null, sheet_id: null })
  })

  it('filters by sheet: that sheet’s events only, with its number and the client address', async () => {
    const answer = await list(`sheetId=${sheetId}`)
    expect(answer.status).toBe(200)
    expect(answer.body.total).toBe(2)
    expect(answer.body.items.map((row: { action: string }) => row.action)).toEqual(['access.refused', 'sheet.created'])
    for (const row of answer.body.items) {
      expect(row).toMatchObject({ sheetId, projectId: cast.demoProjectId, projectNumber: 'NWD-214' })
      expect(row.sheetNumber).toMatch(/^NWD-214/)
      // The tests' requests come from loopback (tests/server/support/client.ts).
      expect(row.ip).toMatch(/^(::ffff:)?127\./)
    }
  })

  it('filters by project: the other project’s events hold none of the demo project’s', async () => {
    const answer = await list(`projectId=${cast.otherProjectId}`)
    expect(answer.status).toBe(200)
    expect(answer.body.total).toBeGreaterThanOrEqual(4) // project created, member added, sheet created, refusals
    expect(answer.body.items.every((row: { projectId: number }) => row.projectId === cast.otherProjectId)).toBe(true)
    const actions = answer.body.items.map((row: { action: string }) => row.action)
    expect(actions).toEqual(expect.arrayContaining(['project.created', 'project.member-added', 'sheet.created', 'access.refused']))
  })

  it('filters by person and action together', async () => {
    const refusals = await list(`personId=${checkerId}&action=access.refused`)
    expect(refusals.status).toBe(200)
    expect(refusals.body.total).toBeGreaterThanOrEqual(1)
    expect(refusals.body.items.every((row: { actorId: number; action: string }) => row.actorId === checkerId && row.action === 'access.refused')).toBe(true)
    expect(refusals.body.items.map((row: { path: string }) => row.path)).toContain(`/api/sheets/${otherSheetId}`)
    const created = await list(`personId=${engineerId}&action=sheet.created&sheetId=${sheetId}`)
    expect(created.body).toMatchObject({ total: 1, items: [{ action: 'sheet.created', actorId: engineerId, sheetId }] })
    // No event of the checker created this sheet.
    expect((await list(`personId=${checkerId}&sheetId=${sheetId}&action=sheet.created`)).body).toMatchObject({ total: 0, items: [] })
  })

  it('lists the actions for the filter’s choices, each once', async () => {
    const answer = await cast.admin.get('/api/audit/actions')
    expect(answer.status).toBe(200)
    expect(answer.body).toEqual(expect.arrayContaining(['access.refused', 'sheet.created', 'project.created']))
    expect(new Set(answer.body).size).toBe(answer.body.length)
    expect((await cast.engineer.get('/api/audit/actions')).status).toBe(403)
  })

  it('refuses bad filter values with 400, never 500', async () => {
    for (const query of ['projectId=0', 'projectId=-1', 'projectId=1e3', 'projectId=abc', 'projectId=2147483648', 'sheetId=1&sheetId=2', 'personId=%00', 'action=%00', 'action=a&action=b', `action=${'x'.repeat(101)}`]) {
      const answer = await list(query)
      expect(answer.status, query).toBe(400)
    }
  })

  it('is the admins’ alone', async () => {
    expect((await cast.checker.get(`/api/audit?projectId=${cast.demoProjectId}`)).status).toBe(403)
    expect((await new Client().get('/api/audit')).status).toBe(401)
    expect((await (await signedIn(demo.client)).get(`/api/audit?sheetId=${sheetId}`)).status).toBe(403)
  })
})

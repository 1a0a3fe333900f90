// The client's portal (issue 8, item 9): a client of the project's organisation sees its issued revisions, current
// and superseded marked, and package issues, never a draft or another organisation's project; acknowledges receipt
// of an issued revision once (a repeat answers the first's time); everyone else is refused with 403, audited.
import { createHash } from 'node:crypto'
import { beforeAll, describe, expect, it } from 'vitest'
import { demoPassword } from '../../scripts/demo-people'
import { Client, database, issuePackageAndWait, issueSheetAndWait, newPerson, signedIn, unique } from './support/client'
import { newSheet, theCast, type Cast } from './support/sheets'

let cast: Cast
/** A sheet issued twice: revision A superseded by revision 0; and a draft sheet next to it. */
let sheet: { id: number; number: string }
let superseded: number
let current: number
let draftRevision: number
let outsideClient: Client

async function act(who: Client, sheetId: number, action: string, body: Record<string, unknown>) {
  const answer = await who.post(`/api/sheets/${sheetId}/${action}`, body)
  if (answer.status !== 200) throw new Error(`${action} answered ${answer.status}: ${JSON.stringify(answer.body)}`)
  return answer.body
}

/** Submit, approve and issue the sheet's current revision (at version 1) through the routes. */
async function issue(sheetId: number, purpose: string) {
  await act(cast.engineer, sheetId, 'submit', { version: 1 })
  await act(cast.checker, sheetId, 'approve', { version: 1, password: demoPassword })
  const { request, job, issued } = await issueSheetAndWait(cast.engineer, sheetId, { version: 1, purpose, password: demoPassword })
  if (job?.body.status !== 'done') throw new Error(`issue answered ${request.status}: ${JSON.stringify(job?.body ?? request.body)}`)
  return issued
}

beforeAll(async () => {
  cast = await theCast()
  const made = await newSheet(cast.engineer, cast.demoProjectId, { title: unique('Portal sheet ') })
  sheet = { id: made.id, number: made.number }
  superseded = (await issue(sheet.id, 'review')).revisionId
  await act(cast.engineer, sheet.id, 'revise', { version: 1 })
  current = (await issue(sheet.id, 'implementation')).revisionId
  const draft = await newSheet(cast.engineer, cast.demoProjectId, { title: unique('Portal draft ') })
  draftRevision = draft.detail.revision.id
  // A client of another organisation: a member of no project of the demo client's organisation.
  const organisation = await cast.admin.post('/api/organisations', { name: unique('Portal Other Utility ') })
  expect(organisation.status).toBe(201)
  const person = await newPerson(cast.admin, ['client'], { name: 'Outside Client', organisationId: organisation.body.id })
  outsideClient = await signedIn(person.email, person.password)
}, 120_000)

describe('GET /api/portal', () => {
  it('lists the organisation’s projects with issued revisions, the superseded one marked, and no draft', async () => {
    const answer = await cast.client.get('/api/portal')
    expect(answer.status).toBe(200)
    const [org] = await database()`select o.name from projects p join organisations o on o.id = p.organisation_id where p.id = ${cast.demoProjectId}`
    expect(answer.body.organisationName).toBe(org!.name)
    const project = answer.body.projects.find((p: { id: number }) => p.id === cast.demoProjectId)
    expect(project).toBeDefined()
    const mine = project.revisions.filter((r: { sheetId: number }) => r.sheetId === sheet.id)
    // Newest first within the sheet: revision 0 current, revision A superseded.
    expect(mine.map((r: { revisionId: number; status: string; label: string }) => [r.revisionId, r.status, r.label])).toEqual([
      [current, 'issued', '0'],
      [superseded, 'superseded', 'A'],
    ])
    expect(mine[0]).toMatchObject({ pdfUrl: `/api/revisions/${current}/pdf`, purpose: 'implementation', supersededAt: null })
    expect(mine[1].supersededAt).not.toBeNull()
    expect(mine[0].fileName).toMatch(/\.pdf$/)
    const revisionIds = answer.body.projects.flatMap((p: { revisions: Array<{ revisionId: number }> }) => p.revisions.map((r) => r.revisionId))
    expect(revisionIds).not.toContain(draftRevision)
    // Every status shown is an issued one, and nothing of comments or people is in the answer.
    const statuses = answer.body.projects.flatMap((p: { revisions: Array<{ status: string }> }) => p.revisions.map((r) => r.status))
    expect(new Set(statuses)).toEqual(new Set(['issued', 'superseded']))
    const text = JSON.stringify(answer.body)
    expect(text).not.toContain('comment')
    expect(text).not.toContain('@')
  })

  it('lists only projects the client is a client member of, of their own organisation', async () => {
    const answer = await cast.client.get('/api/portal')
    const listed = answer.body.projects.map((p: { id: number }) => p.id)
    // theCast's other project: the same organisation, but the demo client is not a member of it.
    expect(listed).not.toContain(cast.otherProjectId)
    const [me] = await database()`select organisation_id from people where id = (select person_id from project_members where project_id = ${cast.demoProjectId} and role = 'client' limit 1)`
    const rows = await database()`select id from projects where organisation_id <> ${me!.organisation_id}`
    for (const row of rows) expect(listed).not.toContain(row.id)
    // The other organisation's client sees nothing of this one.
    const outside = await outsideClient.get('/api/portal')
    expect(outside.status).toBe(200)
    expect(outside.body.projects).toEqual([])
    expect(JSON.stringify(outside.body)).not.toContain(sheet.number)
  })

  it('is for clients: 403 (audited) for an engineer, 401 signed out', async () => {
    expect((await cast.engineer.get('/api/portal')).status).toBe(403)
    const [row] = await database()`select status from audit_events where action = 'access.refused' and path = '/api/portal' order by id desc limit 1`
    expect(row!.status).toBe(403)
    expect((await cast.signedOut.get('/api/portal')).status).toBe(401)
  })

  it('lists a package issue with its PDF, which the client downloads', async () => {
    const made = await cast.engineer.post(`/api/projects/${cast.demoProjectId}/packages`, { title: unique('Portal package ') })
    expect(made.status).toBe(201)
    const inPackage = await newSheet(cast.engineer, cast.demoProjectId, { title: unique('Portal package sheet '), packageId: made.body.id })
    await act(cast.engineer, inPackage.id, 'submit', { version: 1 })
    await act(cast.checker, inPackage.id, 'approve', { version: 1, password: demoPassword })
    const issued = await issuePackageAndWait(cast.engineer, made.body.id, { purpose: 'information', password: demoPassword, sheets: [{ sheetId: inPackage.id, version: 1 }] })
    expect(issued.job?.body.status).toBe('done')
    const project = (await cast.client.get('/api/portal')).body.projects.find((p: { id: number }) => p.id === cast.demoProjectId)
    const listed = project.packageIssues.find((p: { packageId: number }) => p.packageId === made.body.id)
    expect(listed).toMatchObject({ purpose: 'information', title: made.body.title ?? expect.any(String) })
    const pdf = await fetchBytes(cast.client, listed.pdfUrl)
    expect(pdf.status).toBe(200)
    expect(pdf.bytes.subarray(0, 5).toString()).toBe('%PDF-')
    const [stored] = await database()`select sha256 from package_issues where id = ${listed.packageIssueId}`
    expect(createHash('sha256').update(pdf.bytes).digest('hex')).toBe(stored!.sha256)
    expect(pdf.sha256).toBe(stored!.sha256)
    // Another organisation's client is refused it.
    expect((await fetchBytes(outsideClient, listed.pdfUrl)).status).toBe(403)
  }, 120_000)
})

async function fetchBytes(who: Client, path: string) {
  const answer = await who.get<Buffer>(path)
  return { status: answer.status, bytes: answer.body, sha256: answer.headers.get('x-content-sha256') }
}

describe('POST /api/revisions/[id]/acknowledge', () => {
  it('records a client’s acknowledgement once, with its time, and answers the first’s time after', async () => {
    const first = await cast.client.post(`/api/revisions/${current}/acknowledge`, {})
    expect(first.status).toBe(200)
    expect(first.body).toMatchObject({ revisionId: current, recorded: true })
    const at = first.body.acknowledgedAt as string
    expect(Math.abs(Date.parse(at) - Date.now())).toBeLessThan(5 * 60_000)
    const second = await cast.client.post(`/api/revisions/${current}/acknowledge`, {})
    expect(second.status).toBe(200)
    expect(second.body).toEqual({ revisionId: current, acknowledgedAt: at, recorded: false })
    const rows = await database()`select count(*)::int as n from acknowledgements where revision_id = ${current}`
    expect(rows[0]!.n).toBe(1)
    const audited = await database()`select count(*)::int as n from audit_events where action = 'revision.acknowledged' and subject_id = ${String(current)}`
    expect(audited[0]!.n).toBe(1)
    const listed = (await cast.client.get('/api/portal')).body.projects
      .flatMap((p: { revisions: Array<{ revisionId: number; acknowledgedAt: string | null }> }) => p.revisions)
      .find((r: { revisionId: number }) => r.revisionId === current)
    expect(listed.acknowledgedAt).toBe(at)
  })

  it('records one acknowledgement when the same client sends two at once', async () => {
    const [org] = await database()`select organisation_id from projects where id = ${cast.demoProjectId}`
    const person = await newPerson(cast.admin, ['client'], { name: 'Second Northmere Client', organisationId: org!.organisation_id })
    expect((await cast.admin.post(`/api/projects/${cast.demoProjectId}/members`, { personId: person.id, role: 'client' })).status).toBe(201)
    const colleague = await signedIn(person.email, person.password)
    const path = `/api/revisions/${current}/acknowledge`
    const answers = await Promise.all([colleague.post(path, {}), colleague.post(path, {})])
    expect(answers.map((answer) => answer.status)).toEqual([200, 200])
    expect(answers.map((answer) => answer.body.recorded).sort()).toEqual([false, true])
    expect(answers[0]!.body.acknowledgedAt).toBe(answers[1]!.body.acknowledgedAt)
    const rows = await database()`select count(*)::int as n from acknowledgements where revision_id = ${current} and person_id = ${person.id}`
    expect(rows[0]!.n).toBe(1)
  })

  it('accepts a superseded revision', async () => {
    const answer = await cast.client.post(`/api/revisions/${superseded}/acknowledge`, {})
    expect(answer.status).toBe(200)
    expect(answer.body.recorded).toBe(true)
  })

  it('refuses with 403, audited, anyone but a client of the project, and an unissued revision', async () => {
    const path = `/api/revisions/${current}/acknowledge`
    for (const who of [cast.engineer, cast.checker, cast.admin, outsideClient]) {
      expect((await who.post(path, {})).status).toBe(403)
      const [row] = await database()`select status from audit_events where action = 'access.refused' and path = ${path} order by id desc limit 1`
      expect(row!.status).toBe(403)
    }
    // A client of the organisation who is no member of the project.
    const [org] = await database()`select organisation_id from projects where id = ${cast.demoProjectId}`
    const colleague = await newPerson(cast.admin, ['client'], { name: 'Unlisted Client', organisationId: org!.organisation_id })
    expect((await (await signedIn(colleague.email, colleague.password)).post(path, {})).status).toBe(403)
    const draftPath = `/api/revisions/${draftRevision}/acknowledge`
    expect((await cast.client.post(draftPath, {})).status).toBe(403)
    const [draftRow] = await database()`select status, detail from audit_events where action = 'access.refused' and path = ${draftPath} order by id desc limit 1`
    expect(draftRow!.status).toBe(403)
    expect((await database()`select count(*)::int as n from acknowledgements where revision_id = ${draftRevision}`)[0]!.n).toBe(0)
    expect((await cast.signedOut.post(path, {})).status).toBe(401)
  })

  it('answers bad input with 4xx', async () => {
    expect((await cast.client.post(`/api/revisions/${current}/acknowledge`, { extra: 1 })).status).toBe(400)
    expect((await cast.client.post(`/api/revisions/${current}/acknowledge`, [])).status).toBe(400)
    expect((await cast.client.post('/api/revisions/abc/acknowledge', {})).status).toBe(400)
    expect((await cast.client.post('/api/revisions/2147483647/acknowledge', {})).status).toBe(404)
  })
})

// A sheet issued once whose next revision is being written (product.md, "A sheet's life": editing an issued sheet
// starts the next revision as a draft; "Who uses it": a client sees only issued revisions, never drafts or comments).
// The client still opens the sheet, at its newest issued revision, in every route that shows it (the sheet, the
// project's list, the attachments, the package count, the history), and no answer holds anything of the draft;
// the engineer goes on seeing the draft as current.
import { beforeAll, describe, expect, it } from 'vitest'
import { demoPassword } from '../../scripts/demo-people'
import { type Client, issueSheetAndWait, unique } from './support/client'
import { newSheet, theCast, type Cast } from './support/sheets'
import { uploadText } from './support/step-tests'

const DRAFT_MARKER = unique('written in the draft only ')
let cast: Cast
let sheet: { id: number; number: string }
let packageId: number
let issued: { id: number; contentHash: string }
let draft: { id: number; attachmentId: number }

async function act(who: Client, action: string, body: Record<string, unknown>) {
  if (action === 'issue') {
    // An issue is a job: 202 at once, then the job's answer.
    const { request, job, issued } = await issueSheetAndWait(who, sheet.id, body)
    if (!issued) throw new Error(`issue answered ${request.status}: ${JSON.stringify(job?.body ?? request.body)}`)
    return issued
  }
  const answer = await who.post(`/api/sheets/${sheet.id}/${action}`, body)
  if (answer.status !== 200) throw new Error(`${action} answered ${answer.status}: ${JSON.stringify(answer.body)}`)
  return answer.body
}

beforeAll(async () => {
  cast = await theCast()
  const made = await cast.engineer.post(`/api/projects/${cast.demoProjectId}/packages`, { title: unique('Revision view package ') })
  expect(made.status).toBe(201)
  packageId = made.body.id
  const created = await newSheet(cast.engineer, cast.demoProjectId, { title: unique('Under revision '), packageId })
  sheet = { id: created.id, number: created.number }
  expect((await uploadText(cast.engineer, sheet.id, 'issued-record.csv', 'time (s),flow (L/h)\n0,1\n1,2\n')).status).toBe(201)
  await act(cast.engineer, 'submit', { version: 1 })
  await act(cast.checker, 'approve', { version: 1, password: demoPassword })
  const issue = await act(cast.engineer, 'issue', { version: 1, purpose: 'review', password: demoPassword })
  await act(cast.engineer, 'revise', { version: 1 })
  // The draft: new words in its scope, and a file of its own beside the one carried from revision A.
  const current = (await cast.engineer.get(`/api/sheets/${sheet.id}`)).body
  const saved = await cast.engineer.patch(`/api/sheets/${sheet.id}`, { version: current.revision.version, document: { ...current.revision.document, scope: DRAFT_MARKER } })
  expect(saved.status).toBe(200)
  const upload = await uploadText(cast.engineer, sheet.id, 'draft-only.csv', 'time (s),flow (L/h)\n0,3\n1,4\n')
  expect(upload.status).toBe(201)
  draft = { id: current.revision.id, attachmentId: upload.body.id }
  const history = (await cast.engineer.get(`/api/sheets/${sheet.id}/revisions`)).body
  issued = { id: issue.revisionId, contentHash: history.revisions.find((r: { id: number }) => r.id === issue.revisionId).contentHash }
}, 120_000)

/** Nothing of the draft in an answer: its words, its revision, its file, its state. */
function expectNothingOfTheDraft(body: unknown) {
  const text = JSON.stringify(body)
  expect(text).not.toContain(DRAFT_MARKER)
  expect(text).not.toContain('draft-only.csv')
  expect(text).not.toContain(`/api/revisions/${draft.id}/`)
  expect(text).not.toMatch(/"status":"draft"/)
  expect(text).not.toContain('not the current revision')
}

describe('a client and a sheet whose next revision is a draft', () => {
  it('opens the sheet at revision A, issued, with its own document, life and signatures', async () => {
    const answer = await cast.client.get(`/api/sheets/${sheet.id}`)
    expect(answer.status).toBe(200)
    expect(answer.body.revision).toMatchObject({ id: issued.id, index: 0, label: 'A', status: 'issued' })
    expect(answer.body.revision.id).not.toBe(draft.id)
    expect(answer.body.canEdit).toBe(false)
    expect(answer.body.lifecycle).toMatchObject({ status: 'issued', contentHash: issued.contentHash, purpose: 'review', hasPdf: true })
    expect(answer.body.lifecycle.signatures.map((s: { meaning: string; holds: boolean }) => [s.meaning, s.holds])).toEqual([
      ['checked and approved', true],
      ['issued', true],
    ])
    for (const permission of Object.values(answer.body.lifecycle.actions) as Array<{ allowed: boolean }>) expect(permission.allowed).toBe(false)
    expectNothingOfTheDraft(answer.body)
  })

  it('lists the sheet in the project at revision A, and counts it in its package', async () => {
    const listed = await cast.client.get(`/api/projects/${cast.demoProjectId}/sheets?q=${sheet.number}`)
    expect(listed.status).toBe(200)
    expect(listed.body.items).toHaveLength(1)
    expect(listed.body.items[0]).toMatchObject({ id: sheet.id, status: 'issued', revisionIndex: 0, revisionLabel: 'A', packageId })
    expectNothingOfTheDraft(listed.body)
    // Filtered by status, it is an issued sheet and no draft.
    expect((await cast.client.get(`/api/projects/${cast.demoProjectId}/sheets?q=${sheet.number}&status=issued`)).body.total).toBe(1)
    expect((await cast.client.get(`/api/projects/${cast.demoProjectId}/sheets?q=${sheet.number}&status=draft`)).body.total).toBe(0)
    const packages = await cast.client.get(`/api/projects/${cast.demoProjectId}/packages`)
    expect(packages.body.find((p: { id: number }) => p.id === packageId).sheetCount).toBe(1)
  })

  it('lists revision A’s attachments, not the draft’s, and refuses the draft’s file and PDF', async () => {
    const attachments = await cast.client.get(`/api/sheets/${sheet.id}/attachments`)
    expect(attachments.status).toBe(200)
    expect(attachments.body).toMatchObject({ revisionId: issued.id, canUpload: false, canDelete: false })
    expect(attachments.body.attachments.map((a: { name: string; revisionId: number }) => [a.name, a.revisionId])).toEqual([['issued-record.csv', issued.id]])
    expectNothingOfTheDraft(attachments.body)
    expect((await cast.client.get(`/api/attachments/${draft.attachmentId}`)).status).toBe(403)
    expect((await cast.client.get(`/api/revisions/${draft.id}/pdf`)).status).toBe(403)
    expect((await cast.client.get(`/api/revisions/${issued.id}/pdf`)).status).toBe(200)
  })

  it('shows the history as revision A alone, and never the comments', async () => {
    const history = await cast.client.get(`/api/sheets/${sheet.id}/revisions`)
    expect(history.status).toBe(200)
    expect(history.body.revisions.map((r: { id: number; label: string }) => [r.id, r.label])).toEqual([[issued.id, 'A']])
    expectNothingOfTheDraft(history.body)
    expect((await cast.client.get(`/api/revisions/${issued.id}/comments`)).status).toBe(403)
  })

  it('leaves the engineer on the draft, current and editable', async () => {
    const answer = await cast.engineer.get(`/api/sheets/${sheet.id}`)
    expect(answer.body.revision).toMatchObject({ id: draft.id, index: 1, status: 'draft' })
    expect(answer.body.revision.document.scope).toBe(DRAFT_MARKER)
    expect(answer.body.canEdit).toBe(true)
    const listed = await cast.engineer.get(`/api/projects/${cast.demoProjectId}/sheets?q=${sheet.number}`)
    expect(listed.body.items[0]).toMatchObject({ status: 'draft', revisionIndex: 1 })
  })
})

describe('the draft issued in turn', () => {
  it('becomes the client’s sheet at revision B, A superseded, in the sheet and the list', async () => {
    const version = (await cast.engineer.get(`/api/sheets/${sheet.id}`)).body.revision.version
    await act(cast.engineer, 'submit', { version })
    await act(cast.checker, 'approve', { version, password: demoPassword })
    await act(cast.engineer, 'issue', { version, purpose: 'review', password: demoPassword })
    const answer = await cast.client.get(`/api/sheets/${sheet.id}`)
    expect(answer.body.revision).toMatchObject({ id: draft.id, index: 1, label: 'B', status: 'issued' })
    expect(answer.body.revision.document.scope).toBe(DRAFT_MARKER)
    const listed = await cast.client.get(`/api/projects/${cast.demoProjectId}/sheets?q=${sheet.number}`)
    expect(listed.body.items[0]).toMatchObject({ status: 'issued', revisionIndex: 1, revisionLabel: 'B' })
    const history = await cast.client.get(`/api/sheets/${sheet.id}/revisions`)
    expect(history.body.revisions.map((r: { label: string; status: string }) => [r.label, r.status])).toEqual([
      ['B', 'issued'],
      ['A', 'superseded'],
    ])
  })
})

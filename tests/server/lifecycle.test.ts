// A sheet's life through the routes (product.md, "A sheet's life"; server/services/lifecycle.ts): each transition,
// who may take it, the version it names, the signature bound to the content's hash, the issue (a job) with its PDF
// and label, the e-mail written to the outbox in the same transaction, and the database's refusal to change issued work.
import { createHash } from 'node:crypto'
import canonicalize from 'canonicalize'
import { drizzle } from 'drizzle-orm/postgres-js'
import postgres from 'postgres'
import { beforeAll, describe, expect, inject, it } from 'vitest'
import * as schema from '../../server/db/schema'
import { runSheetIssue, type SheetIssueJob } from '../../server/services/lifecycle'
import { demoPassword } from '../../scripts/demo-people'
import { Client, database, demo, issuePackageAndWait, issueSheetAndWait, newPerson, signedIn, unique } from './support/client'
import { lastAudit, newSheet, theCast, type Cast } from './support/sheets'

let cast: Cast
beforeAll(async () => {
  cast = await theCast()
})

// RFC 8785 canonical JSON, by the npm package the server also uses, then SHA-256 from node:crypto.
const hashOf = (document: unknown) => createHash('sha256').update(canonicalize(document)!, 'utf8').digest('hex')

async function act(who: Client, sheetId: number, action: string, body: Record<string, unknown>) {
  return who.post(`/api/sheets/${sheetId}/${action}`, body)
}
const version = async (sheetId: number) => (await cast.engineer.get(`/api/sheets/${sheetId}`)).body.revision.version as number

describe('the life of one sheet', () => {
  it('goes draft → in check → returned → in check → approved → issued, with mail, signatures and the PDF', async () => {
    const sheet = await newSheet(cast.engineer, cast.demoProjectId)
    const v = sheet.detail.revision.version
    expect(sheet.detail.lifecycle.actions.submit).toEqual({ allowed: true })

    expect((await act(cast.engineer, sheet.id, 'submit', { version: v })).body.status).toBe('in check')
    const [submitted] = await database()`select count(*)::int as n from outbox where kind = 'sheet.submitted' and body like ${`%${sheet.number}%`}`
    expect(submitted!.n).toBeGreaterThan(0)
    // The engineer may no longer edit: a save of a sheet in check is refused.
    expect((await cast.engineer.patch(`/api/sheets/${sheet.id}`, { version: v, document: sheet.detail.revision.document })).status).toBe(403)

    expect((await act(cast.checker, sheet.id, 'return', { version: v, reason: 'State the transmitter span.' })).body.status).toBe('returned')
    const [returned] = await database()`select body from outbox where kind = 'sheet.returned' and body like ${`%${sheet.number}%`} order by id desc limit 1`
    expect(returned!.body).toContain('State the transmitter span.')

    const saved = await cast.engineer.patch(`/api/sheets/${sheet.id}`, { version: v, document: { ...sheet.detail.revision.document, scope: 'Span 0 to 10 bar(g).' } })
    expect(saved.status).toBe(200)
    const v2 = saved.body.revision.version
    expect((await act(cast.engineer, sheet.id, 'submit', { version: v2 })).status).toBe(200)

    // A wrong password makes no signature.
    const wrong = await act(cast.checker, sheet.id, 'approve', { version: v2, password: 'not-the-password' })
    expect(wrong.status).toBe(403)
    expect((await database()`select count(*)::int as n from signatures s join sheet_revisions r on r.id = s.revision_id where r.sheet_id = ${sheet.id}`)[0]!.n).toBe(0)

    const approved = await act(cast.checker, sheet.id, 'approve', { version: v2, password: demoPassword })
    expect(approved.status).toBe(200)
    const detail = (await cast.engineer.get(`/api/sheets/${sheet.id}`)).body
    expect(detail.revision.status).toBe('approved')
    const [signature] = detail.lifecycle.signatures
    expect(signature).toMatchObject({ printedName: 'Henrik Salo', role: 'checker', meaning: 'checked and approved', holds: true, engineVersion: detail.revision.engineVersion })
    expect(signature.contentHash).toBe(hashOf(detail.revision.document))
    expect(detail.lifecycle.actions.issue).toEqual({ allowed: true })

    const { request, issued } = await issueSheetAndWait(cast.engineer, sheet.id, { version: v2, purpose: 'review', password: demoPassword })
    expect(request.status).toBe(202)
    expect(issued).toMatchObject({ status: 'issued', label: 'A' })
    const [pdf] = await database()`select p.sha256, p.bytes, p.file_name from revision_pdfs p where p.revision_id = ${issued.revisionId}`
    expect(pdf!.sha256).toBe(createHash('sha256').update(pdf!.bytes).digest('hex'))
    expect(Buffer.from(pdf!.bytes).subarray(0, 5).toString()).toBe('%PDF-')
    const [mailed] = await database()`select count(*)::int as n from outbox where kind = 'sheet.issued' and recipient = ${demo.client} and body like ${`%/?revision=${issued.revisionId}\n%`}`
    expect(mailed!.n).toBe(1)
    const after = (await cast.client.get(`/api/sheets/${sheet.id}`)).body
    expect(after.lifecycle.signatures.map((s: { meaning: string; holds: boolean }) => [s.meaning, s.holds])).toEqual([['checked and approved', true], ['issued', true]])

    // A second issue is refused from the state it no longer leaves; the next revision starts as a copy.
    expect((await issueSheetAndWait(cast.engineer, sheet.id, { version: v2, purpose: 'review', password: demoPassword })).request.status).toBe(409)
    const revised = await act(cast.engineer, sheet.id, 'revise', { version: v2 })
    expect(revised.body).toMatchObject({ status: 'draft', version: 1 })
    const next = (await cast.engineer.get(`/api/sheets/${sheet.id}`)).body
    expect(next.revision.index).toBe(1)
    expect(next.revision.document).toEqual(detail.revision.document)

    // Revision 1 issued for implementation: numbered from 0, and revision A is superseded.
    expect((await act(cast.engineer, sheet.id, 'submit', { version: 1 })).status).toBe(200)
    expect((await act(cast.checker, sheet.id, 'approve', { version: 1, password: demoPassword })).status).toBe(200)
    const second = await issueSheetAndWait(cast.engineer, sheet.id, { version: 1, purpose: 'implementation', password: demoPassword })
    expect(second.issued.label).toBe('0')
    const statuses = await database()`select revision_index, status, label, purpose from sheet_revisions where sheet_id = ${sheet.id} order by revision_index`
    expect(statuses.map((row) => [row.revision_index, row.status, row.label, row.purpose])).toEqual([
      [0, 'superseded', 'A', 'review'],
      [1, 'issued', '0', 'implementation'],
    ])
  })

  it('refuses a stale version with 409 and the stored sheet, and audits it', async () => {
    const sheet = await newSheet(cast.engineer, cast.demoProjectId)
    const stale = await act(cast.engineer, sheet.id, 'submit', { version: sheet.detail.revision.version + 1 })
    expect(stale.status).toBe(409)
    expect(stale.body.data.current.revision.status).toBe('draft')
    const [row] = await database()`select status from audit_events where action = 'sheet.submit-refused' and subject_id = ${String(sheet.id)} order by id desc limit 1`
    expect(row!.status).toBe(409)
    // From a state the action does not leave: approving a draft.
    expect((await act(cast.checker, sheet.id, 'approve', { version: 1, password: demoPassword })).status).toBe(409)
  })

  it('lets nobody check a revision they prepared or edited, whatever roles they hold', async () => {
    const both = await newPerson(cast.admin, ['engineer', 'checker'], { name: 'Both Roles' })
    for (const role of ['engineer', 'checker']) {
      expect((await cast.admin.post(`/api/projects/${cast.demoProjectId}/members`, { personId: both.id, role })).status).toBe(201)
    }
    const person = await signedIn(both.email, both.password)
    // Prepared by the demo engineer, then edited by the person who holds both roles.
    const sheet = await newSheet(cast.engineer, cast.demoProjectId)
    const edited = await person.patch(`/api/sheets/${sheet.id}`, { version: 1, document: { ...sheet.detail.revision.document, conclusions: 'Edited by the would-be checker.' } })
    expect(edited.status).toBe(200)
    expect((await act(cast.engineer, sheet.id, 'submit', { version: 2 })).status).toBe(200)
    const view = (await person.get(`/api/sheets/${sheet.id}`)).body
    expect(view.lifecycle.actions.approve).toEqual({ allowed: false, reason: expect.stringContaining('prepared or edited') })
    const refused = await act(person, sheet.id, 'approve', { version: 2, password: both.password })
    expect(refused.status).toBe(403)
    expect((await act(person, sheet.id, 'return', { version: 2 })).status).toBe(403)
    const [audited] = await database()`select status from audit_events where action = 'access.refused' and path = ${`/api/sheets/${sheet.id}/approve`} order by id desc limit 1`
    expect(audited!.status).toBe(403)
    // The preparer who is also a checker elsewhere: Priya is no checker member here, so refused for the role.
    expect((await act(cast.secondEngineer, sheet.id, 'approve', { version: 2, password: demoPassword })).status).toBe(403)
    // Another checker may.
    expect((await act(cast.checker, sheet.id, 'approve', { version: 2, password: demoPassword })).status).toBe(200)
  })
})

describe('a sheet’s issue is a job', () => {
  const approvedSheet = async () => {
    const sheet = await newSheet(cast.engineer, cast.demoProjectId)
    expect((await act(cast.engineer, sheet.id, 'submit', { version: 1 })).status).toBe(200)
    expect((await act(cast.checker, sheet.id, 'approve', { version: 1, password: demoPassword })).status).toBe(200)
    return sheet
  }
  const jobsOf = (sheetId: number) => database()`select id from jobs where kind = 'sheet.issue' and (payload->>'sheetId')::int = ${sheetId}`

  it('answers 202 at once and its job issues the sheet exactly once; the job run again answers that issue', async () => {
    const sheet = await approvedSheet()
    // Answered in the request, with no job queued: a wrong password (403), a stale version (409 with the sheet).
    expect((await act(cast.engineer, sheet.id, 'issue', { version: 1, purpose: 'review', password: 'not the password' })).status).toBe(403)
    const stale = await act(cast.engineer, sheet.id, 'issue', { version: 2, purpose: 'review', password: demoPassword })
    expect(stale.status).toBe(409)
    expect(stale.body.data.current.revision.status).toBe('approved')
    expect(await jobsOf(sheet.id)).toHaveLength(0)

    const { request, job, issued } = await issueSheetAndWait(cast.engineer, sheet.id, { version: 1, purpose: 'review', password: demoPassword })
    expect(request.status).toBe(202)
    expect(Object.keys(request.body)).toEqual(['jobId'])
    const jobId = request.body.jobId as number
    expect(job!.body).toMatchObject({ kind: 'sheet.issue', status: 'done', attempts: 1, error: null, progress: { done: 1, total: 1, what: 'issued' } })
    expect(issued).toEqual({ sheetId: sheet.id, revisionId: sheet.detail.revision.id, status: 'issued', version: 1, label: 'A' })
    expect((await lastAudit('sheet.issue-requested', `/api/sheets/${sheet.id}/issue`))!.detail).toMatchObject({ jobId, revisionId: issued.revisionId, version: 1, purpose: 'review' })
    const stored = async () =>
      (
        await database()`select
          (select count(*)::int from revision_pdfs where revision_id = ${issued.revisionId} and job_id = ${jobId}) as pdfs,
          (select count(*)::int from signatures where revision_id = ${issued.revisionId} and meaning = 'issued') as signatures,
          (select count(*)::int from outbox where kind = 'sheet.issued' and body like ${`%/?revision=${issued.revisionId}\n%`}) as mails,
          (select count(*)::int from audit_events where action = 'sheet.issued' and (detail->>'jobId')::bigint = ${jobId}) as audited`
      )[0]
    const [contacts] = await database()`select count(*)::int as n from people p join projects j on j.organisation_id = p.organisation_id
      where j.id = ${cast.demoProjectId} and p.active and 'client' = any(p.roles)`
    const once = await stored()
    expect(once).toEqual({ pdfs: 1, signatures: 1, mails: contacts!.n, audited: 1 })
    expect(contacts!.n).toBeGreaterThan(0)

    // The job run again (its runner died after the issue committed, before the job was marked done): it finds the
    // PDF stored under its job id and answers that issue; it renders nothing and stores nothing more.
    const own = postgres(inject('databaseUrl'), { max: 2, onnotice: () => {} })
    try {
      const [row] = await own`select payload from jobs where id = ${jobId}`
      const nothingRenders = async (): Promise<never> => {
        throw new Error('a retried job whose issue exists must not render')
      }
      const again = await runSheetIssue(drizzle(own, { schema }), row!.payload as SheetIssueJob, { jobId, attempt: 2, signal: new AbortController().signal, progress: async () => {} }, { renderSheetPdf: nothingRenders })
      expect(again).toEqual(issued)
      expect(await stored()).toEqual(once)
    } finally {
      await own.end()
    }
  })

  it('refuses an issue while one of the sheet’s package is in hand (409, audited) and queues nothing', async () => {
    const sheet = await approvedSheet()
    // A package issue naming the sheet, held by a runner: its lease far off, so no runner of the test app claims it.
    const payload = database().json({ packageId: 0, sheets: [{ sheetId: sheet.id, version: 1 }] })
    const [held] = await database()`insert into jobs (kind, payload, status, attempts, claimed_until, created_by)
      values ('package.issue', ${payload}, 'running', 1, now() + interval '1 hour', ${cast.ids.engineer}) returning id`
    try {
      const refused = await act(cast.engineer, sheet.id, 'issue', { version: 1, purpose: 'review', password: demoPassword })
      expect(refused.status).toBe(409)
      expect(refused.body.data.reason).toBe(`This sheet is being issued already (job ${held!.id})`)
      expect((await lastAudit('sheet.issue-refused', `/api/sheets/${sheet.id}/issue`))!.status).toBe(409)
      expect(await jobsOf(sheet.id)).toHaveLength(0)
    } finally {
      await database()`update jobs set status = 'failed', claimed_until = null, finished_at = now(), last_error = 'a test’s stand-in' where id = ${held!.id}`
    }
  })
})

describe('comments and approval', () => {
  it('refuses approval while a comment is open, and approves once it is resolved', async () => {
    const sheet = await newSheet(cast.engineer, cast.demoProjectId)
    const v = sheet.detail.revision.version
    expect((await act(cast.engineer, sheet.id, 'submit', { version: v })).status).toBe(200)
    const revisionId = sheet.detail.revision.id as number
    const commented = await cast.checker.post(`/api/revisions/${revisionId}/comments`, { version: v, anchorKind: 'section', anchor: 'scope', body: 'Name the transmitter.' })
    expect(commented.status).toBe(201)
    const commentId = commented.body.comments.at(-1).id
    const blocked = await act(cast.checker, sheet.id, 'approve', { version: v, password: demoPassword })
    expect(blocked.status).toBe(409)
    expect(blocked.body.message).toContain('still open')
    expect((await cast.checker.get(`/api/sheets/${sheet.id}`)).body.lifecycle.actions.approve.reason).toContain('One comment is still open')
    expect((await cast.checker.patch(`/api/comments/${commentId}`, { action: 'resolve', version: v })).status).toBe(200)
    expect((await act(cast.checker, sheet.id, 'approve', { version: v, password: demoPassword })).status).toBe(200)
  })
})

describe('issued work is frozen by the database', () => {
  it('refuses UPDATE and DELETE of an issued revision, a signature and a stored PDF in plain SQL', async () => {
    const sheet = await newSheet(cast.engineer, cast.demoProjectId)
    await act(cast.engineer, sheet.id, 'submit', { version: 1 })
    await act(cast.checker, sheet.id, 'approve', { version: 1, password: demoPassword })
    const { issued } = await issueSheetAndWait(cast.engineer, sheet.id, { version: 1, purpose: 'information', password: demoPassword })
    expect(issued?.status).toBe('issued')
    const revisionId = issued.revisionId as number
    const sql = database()
    const attempts = [
      sql`update sheet_revisions set document = '{}'::jsonb where id = ${revisionId}`,
      sql`update sheet_revisions set status = 'draft' where id = ${revisionId}`,
      sql`delete from sheet_revisions where id = ${revisionId}`,
      sql`update signatures set content_hash = repeat('0', 64) where revision_id = ${revisionId}`,
      sql`delete from signatures where revision_id = ${revisionId}`,
      sql`update revision_pdfs set sha256 = 'x' where revision_id = ${revisionId}`,
      sql`delete from revision_pdfs where revision_id = ${revisionId}`,
    ]
    for (const attempt of attempts) await expect(attempt).rejects.toThrow(/refused/)
    const [still] = await sql`select status, label from sheet_revisions where id = ${revisionId}`
    expect(still).toEqual({ status: 'issued', label: 'A' })
    // An issued revision may only become superseded, nothing else changed with it.
    await expect(sql`update sheet_revisions set status = 'superseded', label = 'Z' where id = ${revisionId}`).rejects.toThrow(/refused/)
  })
})

describe('packages', () => {
  async function packageOf(count: number) {
    const made = await cast.engineer.post(`/api/projects/${cast.demoProjectId}/packages`, { title: unique('Life package ') })
    const sheets = []
    for (let i = 0; i < count; i++) sheets.push(await newSheet(cast.engineer, cast.demoProjectId, { packageId: made.body.id }))
    return { id: made.body.id as number, sheets }
  }
  const approve = async (sheetId: number) => {
    expect((await act(cast.engineer, sheetId, 'submit', { version: 1 })).status).toBe(200)
    expect((await act(cast.checker, sheetId, 'approve', { version: 1, password: demoPassword })).status).toBe(200)
  }

  it('issues nothing while one sheet is not approved, then every sheet at once', async () => {
    const made = await packageOf(3)
    await approve(made.sheets[0]!.id)
    await approve(made.sheets[1]!.id)
    const body = { purpose: 'implementation', password: demoPassword, sheets: made.sheets.map((sheet) => ({ sheetId: sheet.id, version: 1 })) }
    // Refused in the request itself, before any job is queued.
    const refused = await cast.engineer.post(`/api/packages/${made.id}/issue`, body)
    expect(refused.status).toBe(409)
    expect(refused.body.data.reason).toMatch(/must be approved first/)
    const ids = made.sheets.map((sheet) => sheet.id)
    expect((await database()`select count(*)::int as n from sheet_revisions where sheet_id in ${database()(ids)} and status = 'issued'`)[0]!.n).toBe(0)
    await approve(made.sheets[2]!.id)
    const issued = await issuePackageAndWait(cast.engineer, made.id, body)
    expect(issued.request.status).toBe(202)
    expect(issued.job!.body.status).toBe('done')
    expect(issued.job!.body.result.issued.map((sheet: { label: string }) => sheet.label)).toEqual(['0', '0', '0'])
    expect((await database()`select count(*)::int as n from sheet_revisions where sheet_id in ${database()(ids)} and status = 'issued'`)[0]!.n).toBe(3)
    expect((await database()`select count(*)::int as n from package_issues where package_id = ${made.id}`)[0]!.n).toBe(1)
  })
})

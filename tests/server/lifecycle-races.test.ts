// Races of a sheet's life, with real concurrent requests against the built app and PostgreSQL (issue 8, "Tests"):
// the service takes the sheet's and the revision's row locks (SELECT … FOR UPDATE), so of two actions on one
// revision exactly one wins and the other is refused, and no signature ever covers content its signer did not see.
import { createHash } from 'node:crypto'
import canonicalize from 'canonicalize'
import { beforeAll, describe, expect, it } from 'vitest'
import { demoPassword } from '../../scripts/demo-people'
import { database, finishedJob, issueSheetAndWait, newPerson, signedIn, unique, type Client } from './support/client'
import { newSheet, theCast, type Cast } from './support/sheets'

let cast: Cast
let second: { client: Client; password: string }
beforeAll(async () => {
  cast = await theCast()
  const person = await newPerson(cast.admin, ['checker'], { name: 'Second Checker' })
  expect((await cast.admin.post(`/api/projects/${cast.demoProjectId}/members`, { personId: person.id, role: 'checker' })).status).toBe(201)
  second = { client: await signedIn(person.email, person.password), password: person.password }
})

const hashOf = (document: unknown) => createHash('sha256').update(canonicalize(document)!, 'utf8').digest('hex')
const ROUNDS = 5
const statuses = (answers: Array<{ status: number }>) => answers.map((answer) => answer.status).sort()

describe('races', () => {
  it('two checkers approving one revision at once make exactly one signature', async () => {
    for (let round = 0; round < ROUNDS; round++) {
      const sheet = await newSheet(cast.engineer, cast.demoProjectId)
      expect((await cast.engineer.post(`/api/sheets/${sheet.id}/submit`, { version: 1 })).status).toBe(200)
      const answers = await Promise.all([
        cast.checker.post(`/api/sheets/${sheet.id}/approve`, { version: 1, password: demoPassword }),
        second.client.post(`/api/sheets/${sheet.id}/approve`, { version: 1, password: second.password }),
      ])
      expect(statuses(answers)).toEqual([200, 409])
      const [counted] = await database()`select count(*)::int as n from signatures s join sheet_revisions r on r.id = s.revision_id where r.sheet_id = ${sheet.id}`
      expect(counted!.n).toBe(1)
    }
  })

  it('an edit racing a submit and an approval never leaves a signature over content the checker did not see', async () => {
    for (let round = 0; round < ROUNDS; round++) {
      const sheet = await newSheet(cast.engineer, cast.demoProjectId)
      const seen = sheet.detail.revision.document
      // The engineer's save and submit race from version 1; the checker approves the version 1 content it read.
      const [save, submit] = await Promise.all([
        cast.engineer.patch(`/api/sheets/${sheet.id}`, { version: 1, document: { ...seen, conclusions: unique('Changed at the last moment ') } }),
        cast.engineer.post(`/api/sheets/${sheet.id}/submit`, { version: 1 }),
      ])
      expect(statuses([save, submit])).toContain(200)
      const [approve, lateSave] = await Promise.all([
        cast.checker.post(`/api/sheets/${sheet.id}/approve`, { version: 1, password: demoPassword }),
        cast.engineer.patch(`/api/sheets/${sheet.id}`, { version: save.status === 200 ? 2 : 1, document: { ...seen, scope: unique('Another change ') } }),
      ])
      const [stored] = await database()`select document from sheet_revisions where sheet_id = ${sheet.id}`
      const signed = await database()`select content_hash from signatures s join sheet_revisions r on r.id = s.revision_id where r.sheet_id = ${sheet.id}`
      if (approve.status === 200) {
        // Signed: the content is exactly what the checker saw at version 1, and the late save was refused.
        expect(lateSave.status).not.toBe(200)
        expect(signed.map((row) => row.content_hash)).toEqual([hashOf(seen)])
        expect(hashOf(stored!.document)).toBe(hashOf(seen))
      } else {
        expect([403, 409]).toContain(approve.status)
        expect(signed).toHaveLength(0)
      }
    }
  })

  it('two issues of one sheet at once queue one job, which issues it once', async () => {
    // Each round renders one PDF: three rounds are enough to meet the race both ways and keep the suite quick.
    for (let round = 0; round < 3; round++) {
      const sheet = await newSheet(cast.engineer, cast.demoProjectId)
      expect((await cast.engineer.post(`/api/sheets/${sheet.id}/submit`, { version: 1 })).status).toBe(200)
      expect((await cast.checker.post(`/api/sheets/${sheet.id}/approve`, { version: 1, password: demoPassword })).status).toBe(200)
      const body = { version: 1, purpose: 'review', password: demoPassword }
      // The second request takes the sheet's lock after the first has queued its job, and is refused.
      const answers = await Promise.all([issueSheetAndWait(cast.engineer, sheet.id, body), issueSheetAndWait(cast.engineer, sheet.id, body)])
      expect(statuses(answers.map((answer) => answer.request))).toEqual([202, 409])
      const refusal = answers.find((answer) => answer.request.status === 409)!.request
      expect(refusal.body.data.reason).toMatch(/^This sheet is being issued already \(job \d+\)$/)
      expect(answers.find((answer) => answer.request.status === 202)!.job!.body.status).toBe('done')
      expect((await database()`select count(*)::int as n from jobs where kind = 'sheet.issue' and (payload->>'sheetId')::int = ${sheet.id}`)[0]!.n).toBe(1)
      const [stored] = await database()`select
          (select count(*)::int from signatures s join sheet_revisions r on r.id = s.revision_id where r.sheet_id = ${sheet.id} and s.meaning = 'issued') as signatures,
          (select count(*)::int from revision_pdfs p join sheet_revisions r on r.id = p.revision_id where r.sheet_id = ${sheet.id}) as pdfs`
      expect(stored).toEqual({ signatures: 1, pdfs: 1 })
    }
  })

  it('two issues of one package at once give one issue', async () => {
    for (let round = 0; round < ROUNDS; round++) {
      const made = await cast.engineer.post(`/api/projects/${cast.demoProjectId}/packages`, { title: unique('Race package ') })
      const sheets = [await newSheet(cast.engineer, cast.demoProjectId, { packageId: made.body.id }), await newSheet(cast.engineer, cast.demoProjectId, { packageId: made.body.id })]
      for (const sheet of sheets) {
        expect((await cast.engineer.post(`/api/sheets/${sheet.id}/submit`, { version: 1 })).status).toBe(200)
        expect((await cast.checker.post(`/api/sheets/${sheet.id}/approve`, { version: 1, password: demoPassword })).status).toBe(200)
      }
      const body = { purpose: 'review', password: demoPassword, sheets: sheets.map((sheet) => ({ sheetId: sheet.id, version: 1 })) }
      // The second request finds the first one's job queued under the package's lock and is refused.
      const answers = await Promise.all([cast.engineer.post(`/api/packages/${made.body.id}/issue`, body), cast.engineer.post(`/api/packages/${made.body.id}/issue`, body)])
      expect(statuses(answers)).toEqual([202, 409])
      const queued = answers.find((answer) => answer.status === 202)!
      expect((await finishedJob(cast.engineer, queued.body.jobId)).body.status).toBe('done')
      expect((await database()`select count(*)::int as n from package_issues where package_id = ${made.body.id}`)[0]!.n).toBe(1)
      expect((await database()`select count(*)::int as n from signatures s join sheet_revisions r on r.id = s.revision_id where r.sheet_id in ${database()(sheets.map((s) => s.id))} and s.meaning = 'issued'`)[0]!.n).toBe(2)
    }
  })
})

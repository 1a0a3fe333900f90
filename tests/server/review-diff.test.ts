// The revision history and the diff between two revisions (issue 8, item 6), from the stored documents and
// results: a parameter's value, a block, a text section, and the results that changed. The expected figures are
// the stored results read by SQL through the app's one formatter (app/utils/format.ts): the sheet's own print.
import { beforeAll, describe, expect, it } from 'vitest'
import { formatNumber } from '../../app/utils/format'
import { demoPassword } from '../../scripts/demo-people'
import { contentHash } from '../../server/utils/content-hash'
import { database, issueSheetAndWait } from './support/client'
import { newSheet, theCast, type Cast } from './support/sheets'

let cast: Cast
let sheetId: number

beforeAll(async () => {
  cast = await theCast()
  const made = await newSheet(cast.engineer, cast.demoProjectId, { title: 'Booster discharge pressure', loopTag: 'PIC-214-01', template: 'pi-pressure-loop' })
  sheetId = made.id
  // Revision 0 through its life (submit, approve, issue for review: a job) and revision 1 started from it, by the routes.
  const step = async (who: typeof cast.engineer, action: string, body: Record<string, unknown>) => {
    const answer = await who.post(`/api/sheets/${sheetId}/${action}`, { version: 1, ...body })
    expect(answer.status, `${action}: ${JSON.stringify(answer.body)}`).toBe(200)
  }
  await step(cast.engineer, 'submit', {})
  await step(cast.checker, 'approve', { password: demoPassword })
  const issue = await issueSheetAndWait(cast.engineer, sheetId, { version: 1, purpose: 'review', password: demoPassword })
  expect(issue.job?.body.status, JSON.stringify(issue.job?.body ?? issue.request.body)).toBe('done')
  await step(cast.engineer, 'revise', {})
  const document = structuredClone(made.detail.revision.document)
  document.loop.parameters.Kc.value = 1.5
  document.loop.parameters.Kc.max = 1.8
  document.loop.blocks.P.label = 'Pump, header and check valve'
  document.scope = `${document.scope} Revised for the second duty pump.`
  const saved = await cast.engineer.patch(`/api/sheets/${sheetId}`, { version: 1, document })
  expect(saved.status, JSON.stringify(saved.body)).toBe(200)
  expect(saved.body.revision.index).toBe(1)
})

describe('the revision history', () => {
  it('lists every revision, newest first, with status, label and who', async () => {
    const answer = await cast.checker.get(`/api/sheets/${sheetId}/revisions`)
    expect(answer.status).toBe(200)
    expect(answer.body.revisions.map((r: { index: number; status: string; label: string | null }) => [r.index, r.status, r.label])).toEqual([
      [1, 'draft', null],
      [0, 'issued', 'A'],
    ])
    expect(answer.body.revisions[0].preparedBy.name).toBe('Tomás Okafor')
    expect(answer.body.revisions[0].openComments).toBe(0)
  })

  it('gives each revision its purpose, issuer and signatures, each holding while the content hashes to it', async () => {
    const [draft, issued] = (await cast.checker.get(`/api/sheets/${sheetId}/revisions`)).body.revisions
    expect(draft).toMatchObject({ purpose: null, issuedAt: null, issuedBy: null, signatures: [] })
    expect(issued).toMatchObject({ purpose: 'review', issuedBy: { name: 'Tomás Okafor' } })
    // The hash a signature binds to is the RFC 8785 canonical JSON's SHA-256 of the stored document (content-hash.ts).
    const [stored] = await database()`select document, issued_at from sheet_revisions where sheet_id = ${sheetId} and revision_index = 0`
    expect(issued.contentHash).toBe(contentHash(stored!.document))
    expect(issued.issuedAt).toBe(new Date(stored!.issued_at).toISOString())
    expect(issued.signatures.map((s: { name: string; role: string; meaning: string; holds: boolean; contentHash: string }) => [s.name, s.role, s.meaning, s.holds, s.contentHash])).toEqual([
      ['Henrik Salo', 'checker', 'checked and approved', true, issued.contentHash],
      ['Tomás Okafor', 'engineer', 'issued', true, issued.contentHash],
    ])
    // Revision 1's changed document is no revision 0: its hash differs, and it has no signature to hold.
    expect(draft.contentHash).not.toBe(issued.contentHash)
  })

  it('shows a client the issued revisions only, without comment counts', async () => {
    const answer = await cast.client.get(`/api/sheets/${sheetId}/revisions`)
    expect(answer.status).toBe(200)
    expect(answer.body.revisions.map((r: { index: number }) => r.index)).toEqual([0])
    expect(answer.body.revisions[0].comments).toBeNull()
    expect((await cast.outsider.get(`/api/sheets/${sheetId}/revisions`)).status).toBe(403)
  })
})

describe('the diff between two revisions', () => {
  it('names the changed parameter, block and text, and the results that changed', async () => {
    const answer = await cast.checker.get(`/api/sheets/${sheetId}/diff?from=0&to=1`)
    expect(answer.status).toBe(200)
    const diff = answer.body
    expect(diff.same).toBe(false)
    expect(diff.parameters).toEqual([
      { key: 'Kc', change: 'changed', fields: [{ field: 'value', before: '1', after: '1.5' }, { field: 'max', before: '1.2', after: '1.8' }] },
    ])
    expect(diff.blocks).toEqual([{ key: 'P', change: 'changed', fields: [{ field: 'label', before: expect.any(String), after: 'Pump, header and check valve' }] }])
    expect(diff.text.map((t: { section: string }) => t.section)).toEqual(['scope'])
    expect(diff.text[0].parts.filter((p: { added?: boolean }) => p.added).map((p: { value: string }) => p.value).join('')).toContain('second duty pump')
    expect(diff.structure).toEqual([])
    expect(diff.criteria).toEqual([])

    const [r0, r1] = await database()`select result from sheet_revisions where sheet_id = ${sheetId} order by revision_index`
    const phaseMargin = diff.results.find((r: { quantity: string }) => r.quantity === 'margins.phase_margin_deg')
    expect(phaseMargin).toEqual({
      kind: 'figure',
      quantity: 'margins.phase_margin_deg',
      label: 'Phase margin',
      before: formatNumber(r0!.result.margins.phase_margin_deg, { unit: '°' }),
      after: formatNumber(r1!.result.margins.phase_margin_deg, { unit: '°' }),
    })
    expect(phaseMargin.before).not.toBe(phaseMargin.after)
    // The stability verdict did not change (both stable), so it is not listed.
    expect(r1!.result.stability).toBe(r0!.result.stability)
    expect(diff.results.some((r: { quantity: string }) => r.quantity === 'stability')).toBe(false)
  })

  it('finds nothing between a revision and itself; refuses a client a draft, and bad indexes', async () => {
    const itself = await cast.engineer.get(`/api/sheets/${sheetId}/diff?from=1&to=1`)
    expect(itself.status).toBe(200)
    expect(itself.body.same).toBe(true)
    expect(itself.body.results).toEqual([])
    expect((await cast.client.get(`/api/sheets/${sheetId}/diff?from=0&to=1`)).status).toBe(403)
    expect((await cast.client.get(`/api/sheets/${sheetId}/diff?from=0&to=0`)).status).toBe(200)
    expect((await cast.checker.get(`/api/sheets/${sheetId}/diff?from=0&to=7`)).status).toBe(404)
    expect((await cast.checker.get(`/api/sheets/${sheetId}/diff?from=-1&to=1`)).status).toBe(400)
  })
})

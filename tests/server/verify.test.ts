// POST /api/verify (issue 9 item 6): a PDF's SHA-256 tells whether it is an issued revision or package issue, and
// which; anything else, including a draft's preview and an issued PDF with one byte changed, is "not issued".
// Hashes here are SHA-256 by node:crypto, independent of the browser's crypto.subtle the /verify page uses.
import { createHash } from 'node:crypto'
import { beforeAll, describe, expect, it } from 'vitest'
import { demoPassword } from '../../scripts/demo-people'
import { Client, database, issuePackageAndWait, issueSheetAndWait, unique } from './support/client'
import { newSheet, theCast, type Cast } from './support/sheets'

let cast: Cast
beforeAll(async () => {
  cast = await theCast()
})

const sha256 = (bytes: Uint8Array) => createHash('sha256').update(bytes).digest('hex')
// Signed out, from a loopback address of this file's own: the limit counts per client address, and other test
// files ask from 127.0.0.1.
const anyone = new Client(`127.0.${1 + Math.floor(Math.random() * 250)}.${1 + Math.floor(Math.random() * 250)}`)
const verify = (hash: unknown, who: Client = anyone) => who.post('/api/verify', { sha256: hash })

async function act(sheetId: number, action: string, body: Record<string, unknown>) {
  const who = action === 'approve' ? cast.checker : cast.engineer
  const answer = await who.post(`/api/sheets/${sheetId}/${action}`, body)
  expect(answer.status, `${action}: ${JSON.stringify(answer.body)}`).toBe(200)
  return answer.body
}
async function issue(sheetId: number, version: number, purpose: string) {
  await act(sheetId, 'submit', { version })
  await act(sheetId, 'approve', { version, password: demoPassword })
  const { request, job, issued } = await issueSheetAndWait(cast.engineer, sheetId, { version, purpose, password: demoPassword })
  expect(job?.body.status, JSON.stringify(job?.body ?? request.body)).toBe('done')
  return issued
}

describe('POST /api/verify', () => {
  it('knows an issued PDF, says which revision it is and when it is superseded; one changed byte is unknown', async () => {
    const sheet = await newSheet(cast.engineer, cast.demoProjectId)
    const issued = await issue(sheet.id, sheet.detail.revision.version, 'review')
    const download = await cast.client.get(`/api/revisions/${issued.revisionId}/pdf`)
    expect(download.status).toBe(200)
    const bytes = download.body as Buffer
    const hash = sha256(bytes)
    expect(download.headers.get('x-content-sha256')).toBe(hash)

    const answer = await verify(hash)
    expect(answer.status).toBe(200)
    expect(answer.body.issued).toBe(true)
    expect(answer.body.document).toMatchObject({
      kind: 'revision',
      sheetNumber: sheet.number,
      title: sheet.detail.title,
      loopTag: 'TIC-900-01',
      projectNumber: 'NWD-214',
      client: sheet.detail.clientName,
      revision: 'A',
      purpose: 'review',
      standing: 'current',
      supersededAt: null,
      currentRevision: 'A',
    })
    const [row] = await database()`select issued_at from sheet_revisions where id = ${issued.revisionId}`
    expect(answer.body.document.issuedAt).toBe(new Date(row!.issued_at).toISOString())
    expect(answer.body.document.signatures.map((s: { name: string; meaning: string }) => [s.name, s.meaning])).toEqual([
      ['Henrik Salo', 'checked and approved'],
      [expect.any(String), 'issued'],
    ])
    for (const signature of answer.body.document.signatures) expect(Number.isNaN(Date.parse(signature.signedAt))).toBe(false)

    // One byte changed anywhere (here in the middle of the file) is another file.
    const changed = Buffer.from(bytes)
    changed[Math.floor(changed.length / 2)] ^= 0x01
    const tampered = await verify(sha256(changed))
    expect(tampered.status).toBe(200)
    expect(tampered.body).toEqual({ issued: false, message: 'Not an issued Loopwright document' })

    // The next revision issued: the first PDF still verifies, now as superseded by revision 0.
    const next = await act(sheet.id, 'revise', { version: sheet.detail.revision.version })
    await issue(sheet.id, next.version, 'implementation')
    const later = await verify(hash)
    expect(later.body.document).toMatchObject({ revision: 'A', standing: 'superseded', currentRevision: '0' })
    expect(Number.isNaN(Date.parse(later.body.document.supersededAt))).toBe(false)
  })

  it('does not know a draft preview, nor reveals anything of it', async () => {
    const sheet = await newSheet(cast.engineer, cast.demoProjectId)
    const [revision] = await database()`select id from sheet_revisions where sheet_id = ${sheet.id}`
    const preview = await cast.engineer.get(`/api/revisions/${revision!.id}/pdf`)
    expect(preview.status).toBe(200)
    const hash = sha256(preview.body as Buffer)
    expect(preview.headers.get('x-content-sha256')).toBe(hash)
    const answer = await verify(hash)
    expect(answer.body).toEqual({ issued: false, message: 'Not an issued Loopwright document' })
  })

  it('knows an issued package PDF and the revisions it carried', async () => {
    const made = await cast.engineer.post(`/api/projects/${cast.demoProjectId}/packages`, { title: unique('Verify package ') })
    expect(made.status).toBe(201)
    const sheets = [await newSheet(cast.engineer, cast.demoProjectId, { packageId: made.body.id }), await newSheet(cast.engineer, cast.demoProjectId, { packageId: made.body.id })]
    for (const sheet of sheets) {
      await act(sheet.id, 'submit', { version: 1 })
      await act(sheet.id, 'approve', { version: 1, password: demoPassword })
    }
    const issued = await issuePackageAndWait(cast.engineer, made.body.id, {
      purpose: 'information',
      password: demoPassword,
      sheets: sheets.map((sheet) => ({ sheetId: sheet.id, version: 1 })),
    })
    expect(issued.job?.body.status).toBe('done')
    // The package's PDF as stored at issue, hashed here afresh from its bytes.
    const [stored] = await database()`select bytes from package_issues where package_id = ${made.body.id}`
    const answer = await verify(sha256(stored!.bytes))
    expect(answer.body.issued).toBe(true)
    expect(answer.body.document).toMatchObject({ kind: 'package', projectNumber: 'NWD-214', purpose: 'information' })
    // Issued for information: lettered revisions, A first (issued for implementation they would be numbered from 0).
    expect(answer.body.document.sheets.map((s: { sheetNumber: string; revision: string }) => [s.sheetNumber, s.revision])).toEqual(
      sheets.map((sheet) => [sheet.number, 'A']),
    )
  })

  it('refuses what is not a SHA-256 with 400', async () => {
    for (const bad of ['', 'A'.repeat(64), 'g'.repeat(64), 'a'.repeat(63), 'a'.repeat(65), 42, null]) {
      expect((await verify(bad)).status, JSON.stringify(bad)).toBe(400)
    }
  })

  it('limits one client address to 30 lookups in 5 minutes, then answers 429 with Retry-After', async () => {
    const from = new Client(`127.1.${1 + Math.floor(Math.random() * 250)}.${1 + Math.floor(Math.random() * 250)}`)
    const hash = 'ab'.repeat(32)
    for (let i = 0; i < 30; i++) expect((await verify(hash, from)).status).toBe(200)
    const limited = await verify(hash, from)
    expect(limited.status).toBe(429)
    const retryAfter = Number(limited.headers.get('retry-after'))
    expect(retryAfter).toBeGreaterThan(0)
    expect(retryAfter).toBeLessThanOrEqual(300)
    // Another address keeps its own allowance.
    expect((await verify(hash, new Client(`127.2.${1 + Math.floor(Math.random() * 250)}.9`))).status).toBe(200)
  })
})

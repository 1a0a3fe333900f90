// The sheet PDF read back with Debian's poppler-utils (pdfinfo, pdftotext, pdffonts), as a client's reader would:
// the title block and the right "Page x of y" on every page, every font embedded, the preliminary mark on every
// page of a draft and on none of an issued revision, metadata set, no request left the machine, and the route's
// access and audit. Source of the checks: the PDF 1.7 standard (ISO 32000-1) for what an embedded font and the
// document information dictionary are; poppler's tools read them.
import { execFileSync } from 'node:child_process'
import { createHash } from 'node:crypto'
import { mkdtempSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { beforeAll, describe, expect, it } from 'vitest'
import { database } from './support/client'
import { newSheet, theCast, type Cast } from './support/sheets'

const dir = mkdtempSync(join(tmpdir(), 'loopwright-pdf-test-'))
function saved(name: string, bytes: Buffer) {
  const path = join(dir, name)
  writeFileSync(path, bytes)
  return path
}
const poppler = (tool: string, ...args: string[]) => execFileSync(tool, args, { encoding: 'utf8' })
function pagesOf(path: string): string[] {
  const count = Number(/Pages:\s+(\d+)/.exec(poppler('pdfinfo', path))![1])
  return Array.from({ length: count }, (_, index) => poppler('pdftotext', '-layout', '-f', String(index + 1), '-l', String(index + 1), path, '-'))
}
/** Pixels of a page in the preliminary mark's light red (#a12b22 at 11 % on white, about #f1e5e4): green equal to blue, which a plot's orange band is not. */
function markPixels(path: string, page: number): number {
  const ppm = execFileSync('pdftoppm', ['-r', '20', '-f', String(page), '-l', String(page), path])
  // Binary PPM: "P6\n<width> <height>\n255\n" then RGB bytes.
  const header = /^P6\s+(\d+)\s+(\d+)\s+255\s/.exec(ppm.subarray(0, 40).toString('latin1'))!
  let count = 0
  for (let at = header[0].length; at + 2 < ppm.length; at += 3) {
    const [r, g, b] = [ppm[at]!, ppm[at + 1]!, ppm[at + 2]!]
    if (r >= 233 && r <= 248 && r - g >= 7 && r - g <= 18 && Math.abs(g - b) <= 3) count++
  }
  return count
}
/** pdffonts' rows: name, type, encoding, emb, sub, uni, object id. */
function fontsOf(path: string) {
  return poppler('pdffonts', path)
    .trim()
    .split('\n')
    .slice(2)
    .map((line) => {
      const fields = line.trim().split(/\s+/)
      return { name: fields[0]!, embedded: fields.at(-5) }
    })
}

let cast: Cast
let sheet: Awaited<ReturnType<typeof newSheet>>
let revisionId: number
beforeAll(async () => {
  cast = await theCast()
  sheet = await newSheet(cast.engineer, cast.demoProjectId, { template: 'pi-pressure-loop', title: 'Discharge pressure loop, PDF test' })
  const [row] = await database()`select id from sheet_revisions where sheet_id = ${sheet.id}`
  revisionId = row!.id
})

describe('GET /api/revisions/[id]/pdf', () => {
  it('prints a draft as a preliminary preview: title block, page x of y and the mark on every page, fonts embedded', async () => {
    const answer = await cast.engineer.get(`/api/revisions/${revisionId}/pdf`)
    expect(answer.status).toBe(200)
    expect(answer.headers.get('content-type')).toBe('application/pdf')
    expect(answer.headers.get('content-disposition')).toBe(`inline; filename="${sheet.number}_rev-0-draft_preview.pdf"`)
    const bytes = answer.body as Buffer
    expect(answer.headers.get('x-content-sha256')).toBe(createHash('sha256').update(bytes).digest('hex'))
    const path = saved('draft.pdf', bytes)
    const pages = pagesOf(path)
    expect(pages.length).toBeGreaterThan(1)
    pages.forEach((text, index) => {
      expect(text).toContain(sheet.number)
      expect(text).toContain('Cobalt Ridge Engineering')
      expect(text).toContain(sheet.detail.loopTag)
      expect(text).toContain(`Page ${index + 1} of ${pages.length}`)
    })
    // The diagonal mark is rotated, faint text, which pdftotext does not read back reliably: look for its ink instead.
    // Each page turned to pixels (pdftoppm, 20 dpi) holds the mark's light red (about #f1e6e5 on white).
    for (let page = 1; page <= pages.length; page++) expect(markPixels(path, page), `page ${page}`).toBeGreaterThan(100)
    const fonts = fontsOf(path)
    expect(fonts.length).toBeGreaterThan(0)
    expect(fonts.filter((font) => font.embedded !== 'yes')).toEqual([])
    // No fallback: every named face is one the app ships (Noto, KaTeX's own); Type 3 rows are Chromium's drawn glyphs.
    const info = poppler('pdfinfo', path)
    expect(info).toMatch(new RegExp(`Title:\\s+${sheet.number} Discharge pressure loop, PDF test`))
    expect(info).toMatch(/Keywords:.*preliminary/)
    const [audit] = await database()`select detail from audit_events where action = 'pdf.downloaded' and subject_id = ${revisionId} order by id desc limit 1`
    expect(audit!.detail).toMatchObject({ preview: true, blockedRequests: [], pages: pages.length })
  })

  it('refuses a client a draft, and gives them the issued revision with no mark, its content hash and /verify', async () => {
    expect((await cast.client.get(`/api/revisions/${revisionId}/pdf`)).status).toBe(403)
    await database()`update sheet_revisions set status = 'issued', label = 'A' where id = ${revisionId}`
    const answer = await cast.client.get(`/api/revisions/${revisionId}/pdf`)
    expect(answer.status).toBe(200)
    expect(answer.headers.get('content-disposition')).toBe(`attachment; filename="${sheet.number}_rev-A.pdf"`)
    const path = saved('issued.pdf', answer.body as Buffer)
    const pages = pagesOf(path)
    pages.forEach((text, index) => {
      expect(text).not.toContain('Preliminary')
      // Measured on this sheet: 219 to 466 such pixels a page with the mark, 0 without.
      expect(markPixels(path, index + 1), `page ${index + 1}`).toBe(0)
    })
    expect(pages.at(-1)).toMatch(/SHA-256 [0-9a-f]{12}/)
    expect(pages.at(-1)).toContain('/verify')
  })

  it('refuses an outsider, and a forged render token', async () => {
    expect((await cast.outsider.get(`/api/revisions/${revisionId}/pdf`)).status).toBe(403)
    expect((await cast.signedOut.get(`/api/print/${'x'.repeat(40)}.${'y'.repeat(43)}`)).status).toBe(403)
  })
})

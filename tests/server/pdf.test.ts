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
import { createServer } from 'node:http'
import type { AddressInfo } from 'node:net'
import { beforeAll, describe, expect, inject, it } from 'vitest'
import { formatNumber } from '../../app/utils/format'
import { productCautions } from '../../app/utils/cautions'
import { pdfFonts, pdfInfo, pdfPageTexts, poppler } from '../support/poppler'
import { database } from './support/client'
import { newSheet, theCast, type Cast } from './support/sheets'

const dir = mkdtempSync(join(tmpdir(), 'loopwright-pdf-test-'))
function saved(name: string, bytes: Buffer) {
  const path = join(dir, name)
  writeFileSync(path, bytes)
  return path
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
/**
 * Every face the PDF uses is one the app ships, embedded as a subset (the six capitals and + of ISO 32000-1
 * §9.6.4): Noto Sans, Serif, Sans Mono, Sans Math, or KaTeX's own. A sign no shipped face holds would show here as
 * a system face (DejaVu Sans, say), and stroked text as an unnamed Type 3 font.
 */
const SHIPPED_FACE = /^[A-Z]{6}\+(NotoSans|NotoSerif|NotoSansMono|NotoSansMath|KaTeX_[A-Za-z0-9]+)-[A-Za-z]+$/
function expectShippedFacesOnly(path: string) {
  const fonts = pdfFonts(path)
  expect(fonts.length).toBeGreaterThan(0)
  for (const font of fonts) expect(font, font.name).toMatchObject({ name: expect.stringMatching(SHIPPED_FACE), type: 'CID TrueType', embedded: true })
}
/**
 * The body of each page: its text between the title block and the bottom margin (A4 in points, as pdftotext
 * crops; measured on the demo sheets: the title block ends above 125 pt, the margin line starts below 800 pt).
 */
function bodyTextOf(path: string, page: number) {
  return poppler('pdftotext', '-nodiag', '-f', String(page), '-l', String(page), '-x', '0', '-y', '125', '-W', '595', '-H', '675', path, '-').replace(/\s+/g, ' ').trim()
}
/** The title block of product.md, read back from every page: its fields and the right "Page x of y". */
function expectTitleBlockOnEveryPage(pages: string[], fields: string[]) {
  expect(pages.length).toBeGreaterThan(0)
  pages.forEach((text, index) => {
    const flat = text.replace(/\s+/g, ' ')
    for (const field of ['PROJECT', 'CLIENT', 'SHEET', 'TITLE', 'LOOP TAG', 'REVISION · STATUS', 'PREPARED BY', 'CHECKED BY', ...fields]) {
      expect(flat, `page ${index + 1}: ${field}`).toContain(field)
    }
    expect(flat, `page ${index + 1}`).toContain(`Page ${index + 1} of ${pages.length}`)
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
    const pages = pdfPageTexts(path)
    expect(pages.length).toBeGreaterThan(1)
    expectTitleBlockOnEveryPage(pages, [sheet.number, 'Cobalt Ridge Engineering', sheet.detail.loopTag, 'NWD-214', 'Tomás Okafor', '0 (not issued) · Draft', 'not yet checked'])
    // The page count is what the content needs: no page is only a title block (a padded or blank page).
    for (let page = 1; page <= pages.length; page++) expect(bodyTextOf(path, page).length, `page ${page}`).toBeGreaterThan(20)
    // The diagonal mark is rotated, faint text, which pdftotext does not read back reliably: look for its ink instead.
    // Each page turned to pixels (pdftoppm, 20 dpi) holds the mark's light red (about #f1e6e5 on white).
    for (let page = 1; page <= pages.length; page++) expect(markPixels(path, page), `page ${page}`).toBeGreaterThan(100)
    expectShippedFacesOnly(path)
    const info = pdfInfo(path)
    expect(info.Title).toMatch(new RegExp(`^${sheet.number} Discharge pressure loop, PDF test`))
    expect(info.Keywords).toMatch(/preliminary/)
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
    const pages = pdfPageTexts(path)
    expectTitleBlockOnEveryPage(pages, [sheet.number, 'Cobalt Ridge Engineering', sheet.detail.loopTag, 'A · Issued'])
    for (let page = 1; page <= pages.length; page++) expect(bodyTextOf(path, page).length, `page ${page}`).toBeGreaterThan(20)
    expectShippedFacesOnly(path)
    pages.forEach((text, index) => {
      expect(text).not.toContain('Preliminary')
      // Measured on this sheet: 219 to 466 such pixels a page with the mark, 0 without.
      expect(markPixels(path, index + 1), `page ${index + 1}`).toBe(0)
    })
    expect(pages.at(-1)).toMatch(/SHA-256 [0-9a-f]{12}/)
    expect(pages.at(-1)).toContain('/verify')
  })

  it('prints the engine\'s margins, crossovers and step metrics as the app\'s formatter writes them', async () => {
    const [row] = await database()`select result from sheet_revisions where id = ${revisionId}`
    const result = row!.result as {
      margins: { gain_margin_db: number; phase_margin_deg: number; gain_crossover_rad_s: number; phase_crossover_rad_s: number }
      step: { overshoot_pct: number; rise_time_s: number; settling_time_s: number }
      poles: { re: number; im: number }[]
    }
    const answer = await cast.engineer.get(`/api/revisions/${revisionId}/pdf`)
    const text = pdfPageTexts(saved('numbers.pdf', answer.body as Buffer)).join(' ').replace(/[\s\u00a0]+/g, ' ')
    // Each figure as the print view formats it (the criteria table, the plots' marks, the step metrics, the poles).
    const printed = [
      formatNumber(result.margins.gain_margin_db, { unit: 'dB' }),
      formatNumber(result.margins.phase_margin_deg, { unit: '°' }),
      formatNumber(result.margins.gain_crossover_rad_s, { unit: 'rad/s', digits: 3 }),
      formatNumber(result.margins.phase_crossover_rad_s, { unit: 'rad/s', digits: 3 }),
      formatNumber(result.step.overshoot_pct, { unit: '%' }),
      formatNumber(result.step.rise_time_s, { unit: 's' }),
      formatNumber(result.step.settling_time_s, { unit: 's' }),
      ...result.poles.map((pole) => formatNumber(pole.re)),
    ].map((figure) => figure.replace(/\u00a0/g, ' '))
    expect(printed.length).toBeGreaterThan(7)
    for (const figure of printed) expect(text, figure).toContain(figure)
  })

  it('prints the four demo sheets in shipped faces only, with the title block, the mark and a body on every page', async () => {
    const demo = await database()`
      select r.id, s.number, s.loop_tag from sheets s join projects p on p.id = s.project_id
      join sheet_revisions r on r.sheet_id = s.id and r.revision_index = s.current_revision_index
      where p.number = 'NWD-214' and s.loop_tag in ('PIC-214-01', 'LIC-214-02', 'FIC-214-03', 'LIC-214-04') order by s.loop_tag`
    expect(demo.map((row) => row.loop_tag)).toEqual(['FIC-214-03', 'LIC-214-02', 'LIC-214-04', 'PIC-214-01'])
    for (const row of demo) {
      const answer = await cast.engineer.get(`/api/revisions/${row.id}/pdf`)
      expect(answer.status, row.loop_tag).toBe(200)
      const path = saved(`${row.loop_tag}.pdf`, answer.body as Buffer)
      expectShippedFacesOnly(path)
      const pages = pdfPageTexts(path)
      expectTitleBlockOnEveryPage(pages, [row.number, row.loop_tag, 'Cobalt Ridge Engineering'])
      for (let page = 1; page <= pages.length; page++) {
        expect(bodyTextOf(path, page).length, `${row.loop_tag} page ${page}`).toBeGreaterThan(20)
        expect(markPixels(path, page), `${row.loop_tag} page ${page}`).toBeGreaterThan(100)
      }
      const text = pages.join(' ').replace(/[\s\u00a0]+/g, ' ')
      // Symbols print typeset (the steps' sentences, the tolerance corners), never as typed TeX: no G_1, N_G/D_G, K_c.
      expect(text, row.loop_tag).not.toMatch(/[A-Za-z]_[A-Za-z0-9{]/)
      // The corners' summary says how the criteria fare too, not only "all stable".
      expect(text, row.loop_tag).not.toContain('all stable')
      expect(text, row.loop_tag).toMatch(/stable at every corner|not stable/)
      // Each of product.md's cautions once (the seed's firm cautions are the firm's own; a repeated one is left out).
      for (const caution of productCautions) expect(text.split(caution).length - 1, `${row.loop_tag}: ${caution}`).toBe(1)
      // Units as printed: a power after a unit's letter as a superscript (the level template's m² and (m³/s)/%).
      expect(text, row.loop_tag).not.toMatch(/\bm[23]\b/)
      if (row.loop_tag === 'LIC-214-02') for (const unit of ['m²', '(m³/s)/%']) expect(text).toContain(unit)
    }
  })

  it('refuses an outsider, and a forged render token', async () => {
    expect((await cast.outsider.get(`/api/revisions/${revisionId}/pdf`)).status).toBe(403)
    expect((await cast.signedOut.get(`/api/print/${'x'.repeat(40)}.${'y'.repeat(43)}`)).status).toBe(403)
  })
})

describe('the render tab', () => {
  it('lets nothing leave the machine: a page reaching outside is refused, and nothing reaches the listener', async () => {
    // The renderer, run in this process against the test app (its loopback origin); "outside" is a listener on
    // another loopback port, and a host name that only the internet could answer.
    const heard: string[] = []
    const outside = createServer((request, response) => {
      heard.push(request.url ?? '')
      response.end('reached')
    })
    await new Promise<void>((resolve) => outside.listen(0, '127.0.0.1', resolve))
    const port = (outside.address() as AddressInfo).port
    process.env.NITRO_PORT = new URL(inject('baseUrl')).port
    const { printHtmlForTest, closeRenderer } = await import('../../server/services/pdf-render')
    try {
      const html = `<!doctype html><body><p>A page that tries to reach outside.</p>
        <img src="http://127.0.0.1:${port}/image.png"><img src="https://outside.example/logo.png">
        <link rel="stylesheet" href="http://localhost:${port}/style.css">
        <script>Promise.allSettled([fetch('http://127.0.0.1:${port}/fetch'), fetch('https://outside.example/fetch')]).then(() => { document.body.dataset.done = 'true' })</script></body>`
      const printed = await printHtmlForTest(html, 'body[data-done="true"]')
      expect(Buffer.from(printed.bytes).subarray(0, 5).toString()).toBe('%PDF-')
      expect([...printed.blockedRequests].sort()).toEqual(
        [`http://127.0.0.1:${port}/image.png`, 'https://outside.example/logo.png', `http://localhost:${port}/style.css`, `http://127.0.0.1:${port}/fetch`, 'https://outside.example/fetch'].sort(),
      )
      expect(heard).toEqual([])
    } finally {
      await closeRenderer()
      outside.close()
    }
  })
})

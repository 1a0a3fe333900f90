// A package issued as a job and its PDF read back with Debian's poppler-utils (pdfinfo, pdftotext, pdffonts), as the
// client's reader would: the transmittal's index gives each sheet's page range, and each range starts where the
// sheet's own title block and "Page 1 of m" are and ends at its "Page m of m"; every page carries "package page p
// of P"; every font is embedded (ISO 32000-1, the PDF 1.7 standard, for what an embedded font is: from memory).
import { mkdtempSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { beforeAll, describe, expect, inject, it } from 'vitest'
import postgres from 'postgres'
import { drizzle } from 'drizzle-orm/postgres-js'
import * as schema from '../../server/db/schema'
import { runPackageIssue, type PackageIssueJob } from '../../server/services/lifecycle'
import { demoPassword } from '../../scripts/demo-people'
import { pdfFonts, pdfInfo, pdfPageTexts } from '../support/poppler'
import { database, issuePackageAndWait, issueSheetAndWait, newPerson, signedIn, unique } from './support/client'
import { newSheet, theCast, type Cast } from './support/sheets'

const dir = mkdtempSync(join(tmpdir(), 'loopwright-package-test-'))

let cast: Cast
beforeAll(async () => {
  cast = await theCast()
})

const act = async (sheetId: number, action: string, body: Record<string, unknown>) => {
  const client = action === 'approve' ? cast.checker : cast.engineer
  const answer = await client.post(`/api/sheets/${sheetId}/${action}`, body)
  expect(answer.status, `${action}: ${JSON.stringify(answer.body)}`).toBe(200)
  return answer
}

describe('a package issue', () => {
  it('is a job whose progress reaches n of n, and whose PDF holds the transmittal, its index and package page numbers', async () => {
    const made = await cast.engineer.post(`/api/projects/${cast.demoProjectId}/packages`, { title: unique('Transmittal test ') })
    expect(made.status).toBe(201)
    const templates = ['pi-pressure-loop', 'integrating-level-loop', 'dead-time-flow-loop']
    const sheets = []
    for (const template of templates) sheets.push(await newSheet(cast.engineer, cast.demoProjectId, { template, packageId: made.body.id }))
    for (const sheet of sheets) {
      await act(sheet.id, 'submit', { version: 1 })
      await act(sheet.id, 'approve', { version: 1, password: demoPassword })
    }
    // The first sheet is issued on its own first, so the package carries it at that revision.
    const single = await issueSheetAndWait(cast.engineer, sheets[0]!.id, { version: 1, purpose: 'information', password: demoPassword })
    expect(single.job?.body.status, JSON.stringify(single.job?.body ?? single.request.body)).toBe('done')

    const body = { purpose: 'review', password: demoPassword, sheets: sheets.map((sheet) => ({ sheetId: sheet.id, version: 1 })) }
    const wrongPassword = await cast.engineer.post(`/api/packages/${made.body.id}/issue`, { ...body, password: 'not the password' })
    expect(wrongPassword.status).toBe(403)
    expect((await database()`select count(*)::int as n from jobs where kind = 'package.issue' and (payload->>'packageId')::int = ${made.body.id}`)[0]!.n).toBe(0)

    const queued = await cast.engineer.post(`/api/packages/${made.body.id}/issue`, body)
    expect(queued.status).toBe(202)
    const jobId = queued.body.jobId as number
    const seen = new Set<string>()
    let job
    for (const deadline = Date.now() + 90_000; Date.now() < deadline; ) {
      job = (await cast.engineer.get(`/api/jobs/${jobId}`)).body
      if (job.progress?.what) seen.add(job.progress.what)
      if (job.status === 'done' || job.status === 'failed') break
      await new Promise((resolve) => setTimeout(resolve, 40))
    }
    expect(job.status, JSON.stringify(job)).toBe('done')
    expect(job.progress).toEqual({ done: 3, total: 3, what: 'issued' })
    // What the bar showed on the way, each step named after the sheet it was on (a fast render may slip past some).
    for (const what of seen) expect(what).toMatch(new RegExp(`^(sheet [1-3] of 3: (${sheets.map((s) => s.number).join('|')})|the cover sheet and the package page numbers|issued)$`))
    expect(job.result.issued.map((sheet: { sheetId: number; label: string }) => [sheet.sheetId, sheet.label])).toEqual([
      [sheets[1]!.id, 'A'],
      [sheets[2]!.id, 'A'],
    ])

    const [stored] = await database()`select id, bytes, pages, file_name, label from package_issues where job_id = ${jobId}`
    expect(stored!.label).toBe('A')
    expect(stored!.file_name).toBe(`NWD-214_${made.body.number}_rev-A.pdf`)
    const path = join(dir, 'package.pdf')
    writeFileSync(path, stored!.bytes)
    const pages = pdfPageTexts(path)
    expect(pages).toHaveLength(stored!.pages)
    expect(job.result.pages).toBe(pages.length)

    // The cover: firm, project, client, package, purpose, recipients (the client's contacts), date, the index.
    const cover = pages[0]!
    for (const text of ['Cobalt Ridge Engineering', 'Transmittal', 'NWD-214', 'Hollins Booster Station', 'Northmere Water District', made.body.number, made.body.title, 'For review', 'dana.whitlock@example.com']) {
      expect(cover).toContain(text)
    }
    expect(cover).toContain(new Date().toISOString().slice(0, 4))

    // Each sheet's range in the index, against where its own pages are: "Page 1 of m" first, "Page m of m" last.
    const labels = ['A', 'A', 'A']
    for (const [index, sheet] of sheets.entries()) {
      const line = cover.split('\n').find((row) => row.includes(sheet.number))
      expect(line, `index row of ${sheet.number}`).toBeDefined()
      const range = /(\d+)(?:–(\d+))?\s*$/.exec(line!)!
      const first = Number(range[1])
      const last = Number(range[2] ?? range[1])
      expect(line).toContain(labels[index])
      const own = pages.map((text, at) => ({ text, page: at + 1 })).filter(({ text, page }) => page > 1 && text.includes(sheet.number))
      const m = own.length
      expect(m).toBeGreaterThan(0)
      expect(own[0]!.page).toBe(first)
      expect(own.at(-1)!.page).toBe(last)
      expect(own[0]!.text).toContain(`Page 1 of ${m}`)
      expect(own.at(-1)!.text).toContain(`Page ${m} of ${m}`)
    }
    expect(cover).toMatch(/\(issued earlier\)/)

    // Package page numbers on every page, in the stamp's Noto face; every font embedded.
    pages.forEach((text, index) => expect(text, `page ${index + 1}`).toContain(`package page ${index + 1} of ${pages.length}`))
    const fonts = pdfFonts(path)
    expect(fonts.length).toBeGreaterThan(0)
    for (const font of fonts) expect(font.embedded, font.name).toBe(true)
    expect(fonts.some((font) => /NotoSans-Regular/.test(font.name))).toBe(true)
    expect(fonts.some((font) => /Helvetica|Times|Courier/.test(font.name))).toBe(false)
    const info = pdfInfo(path)
    expect(info.Title).toMatch(new RegExp(`^NWD-214 package ${made.body.number}`))
    expect(info.Subject).toMatch(/^Calculation package .*, issued for review, project NWD-214/)
    // Each sheet's issue record (the one issued earlier carried with its own PDF) names its checker under a label like
    // the others, never the bare role.
    const text = pages.join('\n')
    expect(text.match(/^\s*Checked by\s+Henrik Salo, checked and approved/gm)?.length).toBe(sheets.length)
    expect(text).not.toMatch(/^\s*checker\s/m)

    // The client downloads it under the firm's name for it.
    const download = await cast.client.get(`/api/package-issues/${stored!.id}/pdf`)
    expect(download.status).toBe(200)
    expect(download.headers.get('content-disposition')).toContain(`NWD-214_${made.body.number}_rev-A.pdf`)

    // The job run again (its runner died after the issue committed, before the job was marked done): it answers the
    // issue it made, found by its job id, and renders and issues nothing more.
    const own = postgres(inject('databaseUrl'), { max: 2, onnotice: () => {} })
    try {
      const [row] = await own`select payload from jobs where id = ${jobId}`
      const nothingRenders = async (): Promise<never> => {
        throw new Error('a retried job whose issue exists must not render')
      }
      const again = await runPackageIssue(drizzle(own, { schema }), row!.payload as PackageIssueJob, { jobId, attempt: 2, signal: new AbortController().signal, progress: async () => {} }, {
        renderSheetPdf: nothingRenders,
        assemblePackagePdf: () => ({ add: nothingRenders, finish: nothingRenders }),
      })
      expect(again).toEqual(job.result)
      expect((await own`select count(*)::int as n from package_issues where package_id = ${made.body.id}`)[0]!.n).toBe(1)
    } finally {
      await own.end()
    }
  }, 150_000)

  it('prints a cover that runs past one page again, through the warm tab, with the index counting its pages', async () => {
    // A client organisation of its own with 150 contacts: the recipients alone push the transmittal past one page, so
    // the renderer prints the cover a second time with a new token on the same route (server/services/package-pdf.ts).
    const organisation = await cast.admin.post('/api/organisations', { name: unique('Many Contacts Utility ') })
    expect(organisation.status).toBe(201)
    const number = unique('MANY-').toUpperCase()
    const project = await cast.admin.post('/api/projects', { number, name: 'Works with many contacts', organisationId: organisation.body.id })
    expect(project.status).toBe(201)
    // An engineer and a checker of its own: the demo people's project lists stay as other tests expect them.
    const engineerPerson = await newPerson(cast.admin, ['engineer'], { name: `Many-contacts engineer ${number}` })
    const checkerPerson = await newPerson(cast.admin, ['checker'], { name: `Many-contacts checker ${number}` })
    for (const [person, role] of [[engineerPerson, 'engineer'], [checkerPerson, 'checker']] as const) {
      expect((await cast.admin.post(`/api/projects/${project.body.id}/members`, { personId: person.id, role })).status).toBe(201)
    }
    const engineer = await signedIn(engineerPerson.email, engineerPerson.password)
    const checker = await signedIn(checkerPerson.email, checkerPerson.password)
    const handle = unique('contact').toLowerCase()
    await database()`
      insert into people (name, email, roles, organisation_id)
      select 'Contact ' || n || ' of the many', ${handle} || '-' || n || '@example.com', array['client'], ${organisation.body.id}::int
      from generate_series(1, 150) as n`
    const made = await engineer.post(`/api/projects/${project.body.id}/packages`, { title: unique('Long transmittal ') })
    expect(made.status).toBe(201)
    const sheet = await newSheet(engineer, project.body.id, { template: 'pi-pressure-loop', packageId: made.body.id })
    expect((await engineer.post(`/api/sheets/${sheet.id}/submit`, { version: 1 })).status).toBe(200)
    expect((await checker.post(`/api/sheets/${sheet.id}/approve`, { version: 1, password: checkerPerson.password })).status).toBe(200)

    const { request, job } = await issuePackageAndWait(engineer, made.body.id, { purpose: 'review', password: engineerPerson.password, sheets: [{ sheetId: sheet.id, version: 1 }] })
    expect(job?.body.status, JSON.stringify(job?.body ?? request.body)).toBe('done')
    const [stored] = await database()`select bytes from package_issues where job_id = ${request.body.jobId}`
    const path = join(dir, 'long-cover.pdf')
    writeFileSync(path, stored!.bytes)
    const pages = pdfPageTexts(path)
    // The cover's pages, each numbered as the cover's own; the last contact is on them; the sheet starts after them.
    const coverPages = Number(/Cover page 1 of (\d+)/.exec(pages[0]!)?.[1])
    expect(coverPages).toBeGreaterThanOrEqual(2)
    for (let page = 1; page <= coverPages; page++) expect(pages[page - 1]).toContain(`Cover page ${page} of ${coverPages}`)
    const cover = pages.slice(0, coverPages).join('\n')
    expect(cover).toContain(`${handle}-150@example.com`)
    const line = cover.split('\n').find((row) => row.includes(sheet.number))
    expect(line, 'index row of the sheet').toMatch(new RegExp(`${coverPages + 1}–${pages.length}\\s*$`))
    expect(pages[coverPages]).toContain(sheet.number)
    expect(pages[coverPages]).toContain(`Page 1 of ${pages.length - coverPages}`)
    pages.forEach((text, index) => expect(text, `page ${index + 1}`).toContain(`package page ${index + 1} of ${pages.length}`))
  }, 150_000)
})

// A sheet's whole life in the browser (issue 8, "the whole life"), every piece real: PostgreSQL, Chromium, the
// SMTP sink. The engineer submits; the checker reads the recomputation, comments on a block and returns it; the
// engineer answers, fixes a gain and submits again; the checker resolves the comment and approves with their
// password; the engineer issues it for implementation; the client follows the e-mail's link from the sink, signs
// in, downloads the PDF and acknowledges receipt; the engineer starts revision 1, changes the gain again, and the
// history page shows both revisions, their signatures and the change. Only the set-up (a project and a sheet of
// their own) goes through the API; every step of the life is a click or a keystroke, and the server's stored rows
// are the witness of what the screens show.
import { createHash } from 'node:crypto'
import { mkdtemp, readdir, readFile, rm } from 'node:fs/promises'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import type { Page } from 'puppeteer-core'
import postgres from 'postgres'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { demoPassword } from '../../scripts/demo-people'
import type { Page as ListPage } from '../../shared/schemas/lists'
import type { ProjectRow } from '../../shared/schemas/projects'
import type { SheetDetail } from '../../shared/schemas/sheets'
import { pdfPageCount, pdfPageTexts } from '../support/poppler'
import { api, apiSignIn, baseUrl, mailApiUrl } from './api'
import { clearAndType, fillSignIn, launchBrowser, screenshot, signIn, textOf, type TestBrowser } from './browser'

const people = {
  admin: 'imogen.varga@example.com',
  engineer: 'tomas.okafor@example.com',
  checker: 'henrik.salo@example.com',
  client: 'dana.whitlock@example.com',
}

let chromium: TestBrowser
let sql: postgres.Sql
let sheetId: number
let sheetNumber: string
let downloads: string
/** The engineer's API session: the witness's reads. */
let witness: string

beforeAll(async () => {
  chromium = await launchBrowser()
  sql = postgres(inject('databaseUrl'), { max: 1, onnotice: () => {} })
  downloads = await mkdtemp(join(tmpdir(), 'loopwright-downloads-'))
  // A project of its own for Northmere Water District, with the demo engineer, checker and client as members, so
  // nothing here disturbs the other tests' NWD-214.
  const admin = await apiSignIn(people.admin, demoPassword)
  const organisations = await api<ListPage<{ id: number }>>(admin, '/api/organisations?q=Northmere')
  const project = await api<ProjectRow>(admin, '/api/projects', {
    method: 'POST',
    body: { number: `NWD-214-W${Date.now() % 100000}`, name: 'Hollins Booster Station, whole life', organisationId: organisations.body.items[0]!.id },
  })
  expect(project.status).toBe(201)
  for (const [email, role] of [[people.engineer, 'engineer'], [people.checker, 'checker'], [people.client, 'client']] as const) {
    const found = await api<ListPage<{ id: number }>>(admin, `/api/people?q=${encodeURIComponent(email)}`)
    const added = await api(admin, `/api/projects/${project.body.id}/members`, { method: 'POST', body: { personId: found.body.items[0]!.id, role } })
    expect(added.status).toBe(201)
  }
  witness = await apiSignIn(people.engineer, demoPassword)
  const created = await api<{ id: number; number: string }>(witness, `/api/projects/${project.body.id}/sheets`, {
    method: 'POST',
    body: { title: 'Booster discharge pressure, whole life', loopTag: 'PIC-214-71', template: 'pi-pressure-loop' },
  })
  expect(created.status).toBe(201)
  sheetId = created.body.id
  sheetNumber = created.body.number
}, 30_000)
afterAll(async () => {
  await chromium?.close()
  await sql?.end()
  if (downloads) await rm(downloads, { recursive: true, force: true })
})

/** The sheet as the server holds it: the witness. */
async function stored(): Promise<SheetDetail> {
  return (await api<SheetDetail>(witness, `/api/sheets/${sheetId}`)).body
}

/** Signs in on a page of its own and opens the sheet from the home page's list, as the person would. */
async function openFromHome(email: string, listed: string): Promise<Page> {
  const page = await chromium.newPage()
  await signIn(page, baseUrl(), email, demoPassword)
  await page.waitForSelector(`${listed} a`)
  await page.click(`${listed} a`)
  await page.waitForSelector('[data-testid=lifecycle-panel]')
  await page.waitForNetworkIdle({ idleTime: 200 })
  return page
}
/** The state the page shows in words: the heading's status and the panel's badge. */
async function waitForState(page: Page, status: string) {
  await page.waitForFunction(
    (wanted) => document.querySelector('[data-testid=sheet-status]')?.textContent?.trim() === wanted && document.querySelector(`[data-testid=lifecycle-panel] [data-sheet-status="${wanted}"]`),
    { timeout: 30_000 },
    status,
  )
}
async function signWith(page: Page, action: 'approve' | 'issue') {
  await page.click(`[data-testid=lifecycle-${action}]`)
  await page.waitForSelector('[data-testid=sign-password]')
  if (action === 'issue') await page.select('[data-testid=issue-purpose]', 'implementation')
  await page.type('[data-testid=sign-password]', demoPassword)
  await page.click('[data-testid=lifecycle-confirm]')
}
/** Types a new value of the gain Kc into the parameter table and waits for the server to hold it. */
async function setGain(page: Page, value: string, savedVersion: number) {
  const index = await page.$$eval('[data-parameter]', (rows) => rows.findIndex((row) => row.getAttribute('data-parameter') === 'Kc'))
  await clearAndType(page, `[data-field="parameters[${index}].value"]`, value)
  await page.waitForFunction(
    (version) => document.querySelector('[data-testid=save-state]')?.textContent?.trim() === `Saved · version ${version}`,
    { timeout: 20_000 },
    savedVersion,
  )
}

interface StoredMessage {
  to: string[]
  subject: string
  text: string
}
/** The issue e-mail to the client, from the sink's HTTP API (the outbox worker delivers it). */
async function issueMail(to: string): Promise<StoredMessage> {
  for (let attempt = 0; attempt < 300; attempt++) {
    const messages = (await (await fetch(`${mailApiUrl()}/messages?to=${encodeURIComponent(to)}`)).json()) as StoredMessage[]
    const found = messages.find((message) => message.text.includes(`${sheetNumber} revision`))
    if (found) return found
    await new Promise((resolve) => setTimeout(resolve, 100))
  }
  throw new Error(`no issue e-mail of ${sheetNumber} reached ${to}`)
}
async function downloaded(): Promise<string> {
  for (let attempt = 0; attempt < 200; attempt++) {
    const done = (await readdir(downloads)).filter((name) => name.endsWith('.pdf'))
    if (done.length) return join(downloads, done[0]!)
    await new Promise((resolve) => setTimeout(resolve, 100))
  }
  throw new Error('the PDF was not downloaded')
}

describe('a sheet from draft to its second revision, in the browser', () => {
  it('goes through check, return, answer, approval, issue, the client and revision 1', async () => {
    // The engineer submits the new sheet from its page.
    const engineer = await openFromHome(people.engineer, `[data-my-sheet="${sheetId}"]`)
    await engineer.click('[data-testid=lifecycle-submit]')
    await waitForState(engineer, 'in check')
    expect((await stored()).revision.status).toBe('in check')

    // The checker finds it in their queue, reads the recomputation, comments on block P and returns the sheet.
    const checker = await openFromHome(people.checker, `[data-queued="${sheetId}"]`)
    await checker.waitForSelector('[data-testid=recomputation-agrees]')
    expect(await textOf(checker, '[data-testid=engine-versions]')).toMatch(/engine \d+\.\d+\.\d+/)
    await checker.select('[data-testid=comment-kind]', 'block')
    await checker.select('[data-testid=comment-anchor]', 'P')
    await checker.type('[data-testid=comment-text]', 'Kc leaves little phase margin at the top of its band: take it down to 0.9.')
    await checker.click('[data-testid=add-comment]')
    await checker.waitForSelector('[data-comment-section=blocks] [data-testid=comment][data-comment-state=open]')
    // Open comments block approval, and the panel says so as soon as the comment is written.
    await checker.waitForSelector('[data-testid=lifecycle-approve-reason]')
    expect(await textOf(checker, '[data-testid=lifecycle-approve-reason]')).toContain('One comment is still open')
    expect(await checker.$('[data-testid=lifecycle-approve]')).toBeNull()
    await checker.click('[data-testid=lifecycle-return]')
    await checker.type('[data-testid=return-reason]', 'One comment on the pump and header block.')
    await checker.click('[data-testid=lifecycle-confirm]')
    await waitForState(checker, 'returned')

    // The engineer: the returned sheet first on the home page; answers, fixes the gain, submits again.
    await engineer.goto(`${baseUrl()}/`, { waitUntil: 'networkidle0' })
    expect(await engineer.$eval('[data-testid=my-sheets] li', (row) => row.getAttribute('data-my-sheet'))).toBe(String(sheetId))
    await engineer.click(`[data-my-sheet="${sheetId}"] a`)
    await engineer.waitForSelector('[data-testid=answer-text]')
    await engineer.type('[data-testid=answer-text]', 'Kc taken down to 0.9, within its tolerance band.')
    await engineer.click('[data-testid=answer]')
    await engineer.waitForSelector('[data-testid=comment][data-comment-state=answered]')
    await setGain(engineer, '0.9', 2)
    await engineer.click('[data-testid=lifecycle-submit]')
    await waitForState(engineer, 'in check')
    const resubmitted = await stored()
    expect(resubmitted.revision.document.loop.parameters.Kc!.value).toBe(0.9)
    expect(resubmitted.revision.version).toBe(2)

    // The checker resolves the answered comment; approval is then offered, and signed with the password.
    await checker.goto(`${baseUrl()}/`, { waitUntil: 'networkidle0' })
    await checker.click(`[data-queued="${sheetId}"] a`)
    await checker.waitForSelector('[data-testid=comment-answer]')
    expect(await textOf(checker, '[data-testid=comment-answer]')).toContain('0.9')
    await checker.click('[data-testid=resolve]')
    await checker.waitForSelector('[data-testid=comment][data-comment-state=resolved]')
    await checker.waitForSelector('[data-testid=lifecycle-approve]')
    await signWith(checker, 'approve')
    await waitForState(checker, 'approved')
    await checker.waitForSelector('[data-testid=signatures] li[data-holds=true]')
    await checker.close()

    // The engineer finds it on the home page, approved and ready to issue, and issues it for implementation,
    // signing too. The page may show the issue's progress first: the test waits for the state it shows.
    await engineer.goto(`${baseUrl()}/`, { waitUntil: 'networkidle0' })
    await engineer.click(`[data-ready-sheet="${sheetId}"] a`)
    await engineer.waitForSelector('[data-testid=lifecycle-issue]')
    await signWith(engineer, 'issue')
    await waitForState(engineer, 'issued')
    await engineer.waitForSelector('[data-testid=lifecycle-pdf]')
    await screenshot(engineer, 'whole-life-2-issued')
    const issued = await stored()
    expect(issued.revision).toMatchObject({ status: 'issued', label: '0' })
    expect(issued.lifecycle.signatures.map((signature) => [signature.printedName, signature.meaning, signature.holds])).toEqual([
      ['Henrik Salo', 'checked and approved', true],
      ['Tomás Okafor', 'issued', true],
    ])
    const revisionId = issued.revision.id
    const [pdfRow] = await sql`select sha256 from revision_pdfs where revision_id = ${revisionId}`

    // The client: the e-mail in the sink, its link followed signed out, the sign-in, then their portal with the
    // revision marked; the PDF downloaded through the page's link, and receipt acknowledged.
    const mail = await issueMail(people.client)
    expect(mail.subject).toContain('for implementation')
    const link = new URL(mail.text.match(/https?:\/\/\S+/)![0])
    expect(`${link.pathname}${link.search}`).toBe(`/?revision=${revisionId}`)
    const context = await chromium.browser.createBrowserContext({ downloadBehavior: { policy: 'allow', downloadPath: downloads } })
    const client = await chromium.newPage(context)
    await client.goto(`${baseUrl()}${link.pathname}${link.search}`, { waitUntil: 'networkidle0' })
    expect(new URL(client.url()).pathname).toBe('/sign-in')
    await fillSignIn(client, people.client, demoPassword)
    await client.click('button[type=submit]')
    const row = `[data-portal-revision="${revisionId}"]`
    await client.waitForSelector(`${row}[data-linked]`)
    expect(await textOf(client, '[data-testid=portal-linked]')).toContain(`${sheetNumber} revision 0`)
    await client.click(`${row} [data-download]`)
    const file = await downloaded()
    const bytes = await readFile(file)
    expect(bytes.subarray(0, 5).toString()).toBe('%PDF-')
    expect(createHash('sha256').update(bytes).digest('hex')).toBe(pdfRow!.sha256)
    // Read back as a client's reader would (Debian's poppler-utils): the title block names the checker on every
    // page, and the sign-off block both signatures over the content the signatures bind to.
    const text = pdfPageTexts(file).join('\f')
    expect(text).not.toContain('not yet checked')
    const pages = pdfPageCount(file)
    expect(text.match(/Henrik Salo, \d+ \w+ \d{4}/g)?.length).toBeGreaterThanOrEqual(pages)
    expect(text.match(new RegExp(`Signed electronically over content ${issued.lifecycle.contentHash.slice(0, 12)}`, 'g'))).toHaveLength(2)
    await client.click(`${row} [data-acknowledge]`)
    await client.waitForSelector(`${row} [data-acknowledged]`)
    await screenshot(client, 'whole-life-3-client')
    const [acknowledged] = await sql`select count(*)::int as n from acknowledgements a join people p on p.id = a.person_id where a.revision_id = ${revisionId} and p.email = ${people.client}`
    expect(acknowledged!.n).toBe(1)
    await context.close()

    // The engineer starts revision 1 from the issued sheet, changes the gain, and reads the history.
    await engineer.reload({ waitUntil: 'networkidle0' })
    await engineer.click('[data-testid=lifecycle-revise]')
    await waitForState(engineer, 'draft')
    await setGain(engineer, '1.1', 2)
    const revised = await stored()
    expect(revised.revision).toMatchObject({ index: 1, status: 'draft', version: 2 })
    expect(revised.revision.document.loop.parameters.Kc!.value).toBe(1.1)
    await engineer.click('[data-testid=history-link]')
    await engineer.waitForSelector('[data-testid=revision-table]')
    expect(await engineer.$$eval('[data-testid=revision-table] tbody tr', (rows) => rows.map((r) => r.getAttribute('data-revision-index')))).toEqual(['1', '0'])
    const first = '[data-testid=revision-table] tr[data-revision-index="0"]'
    expect(await textOf(engineer, `${first} [data-field=purpose]`)).toMatch(/^For implementation\s+issued .* UTC by Tomás Okafor$/)
    expect(await engineer.$$eval(`${first} [data-testid=history-signatures] li`, (items) => items.map((li) => [li.getAttribute('data-meaning'), li.getAttribute('data-holds')]))).toEqual([
      ['checked and approved', 'true'],
      ['issued', 'true'],
    ])
    const [signature] = await sql`select content_hash from signatures where revision_id = ${revisionId} and meaning = 'issued'`
    expect(await textOf(engineer, `${first} [data-testid=history-signatures] li[data-meaning=issued]`)).toContain(String(signature!.content_hash).slice(0, 12))
    await engineer.waitForSelector('[data-testid=diff-parameters]')
    expect(await textOf(engineer, '[data-testid=diff-parameters]')).toMatch(/Kc changed\s+value: 0\.9 → 1\.1/)
    await screenshot(engineer, 'whole-life-4-history')
    await engineer.close()
  }, 90_000)
})

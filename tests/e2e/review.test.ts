// The check in the browser (issue 8, items 3, 5, 6): the checker reads the recomputation and comments on a block;
// the engineer answers; the checker resolves; the history page shows the revisions and the diff. The revision is
// put in check by SQL, as the workflow's submit will do (branch flow). The server's answers are the witness.
import type { Page } from 'puppeteer-core'
import postgres from 'postgres'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { demoPassword } from '../../scripts/demo-people'
import type { RevisionComments } from '../../shared/schemas/comments'
import { api, apiSignIn, baseUrl } from './api'
import { launchBrowser, screenshot, signIn, type TestBrowser } from './browser'

const engineerEmail = 'tomas.okafor@example.com'
const checkerEmail = 'henrik.salo@example.com'

let chromium: TestBrowser
let sql: postgres.Sql
let sheetId: number
let revisionId: number
let engineerCookie: string

beforeAll(async () => {
  chromium = await launchBrowser()
  sql = postgres(inject('databaseUrl'), { max: 1, onnotice: () => {} })
  engineerCookie = await apiSignIn(engineerEmail, demoPassword)
  const [project] = await sql`select id from projects where number = 'NWD-214'`
  const created = await api<{ id: number }>(engineerCookie, `/api/projects/${project!.id}/sheets`, {
    method: 'POST',
    body: { title: 'Booster discharge pressure, for check', loopTag: 'PIC-214-01', template: 'pi-pressure-loop' },
  })
  expect(created.status).toBe(201)
  sheetId = created.body.id
  const [revision] = await sql`update sheet_revisions set status = 'in check' where sheet_id = ${sheetId} returning id`
  revisionId = revision!.id
})
afterAll(async () => {
  await chromium?.close()
  await sql?.end()
})

async function openSheetAs(email: string): Promise<Page> {
  const page = await chromium.newPage()
  await signIn(page, baseUrl(), email, demoPassword)
  await page.goto(`${baseUrl()}/sheets/${sheetId}`, { waitUntil: 'networkidle0' })
  await page.waitForSelector('[data-testid=review-comments]')
  return page
}

describe('comment, answer, resolve', () => {
  it('the checker reads the recomputation and comments on a block', async () => {
    const page = await openSheetAs(checkerEmail)
    await page.waitForSelector('[data-testid=recomputation-agrees]')
    expect(await page.$eval('[data-testid=engine-versions]', (e) => (e as HTMLElement).innerText)).toMatch(/engine \d+\.\d+\.\d+/)
    await page.select('[data-testid=comment-kind]', 'block')
    await page.select('[data-testid=comment-anchor]', 'P')
    await page.type('[data-testid=comment-text]', 'State the source of the pump curve used for Kg.')
    await Promise.all([page.waitForResponse((r) => r.url().endsWith(`/api/revisions/${revisionId}/comments`) && r.request().method() === 'POST'), page.click('[data-testid=add-comment]')])
    await page.waitForSelector('[data-testid=comment][data-comment-state=open]')
    expect(await page.$eval('[data-comment-section=blocks]', (e) => (e as HTMLElement).innerText)).toContain('State the source of the pump curve')
    await screenshot(page, 'review-checker-comment')
    const witness = await api<RevisionComments>(engineerCookie, `/api/revisions/${revisionId}/comments`)
    expect(witness.body.comments.map((c) => [c.anchorKind, c.anchor, c.state])).toEqual([['block', 'P', 'open']])
    await page.close()
  })

  it('the engineer answers it', async () => {
    const page = await openSheetAs(engineerEmail)
    expect(await page.$('[data-testid=comment-form]')).toBeNull()
    await page.type('[data-testid=answer-text]', 'Pump curve from the maker’s datasheet, rev C, attached.')
    await Promise.all([page.waitForResponse((r) => /\/api\/comments\/\d+$/.test(r.url()) && r.request().method() === 'PATCH'), page.click('[data-testid=answer]')])
    await page.waitForSelector('[data-testid=comment][data-comment-state=answered]')
    await screenshot(page, 'review-engineer-answer')
    await page.close()
  })

  it('the checker resolves it, and no comment is left open', async () => {
    const page = await openSheetAs(checkerEmail)
    expect(await page.$eval('[data-testid=comment-answer]', (e) => (e as HTMLElement).innerText)).toContain('rev C')
    await Promise.all([page.waitForResponse((r) => /\/api\/comments\/\d+$/.test(r.url()) && r.request().method() === 'PATCH'), page.click('[data-testid=resolve]')])
    await page.waitForSelector('[data-testid=comment][data-comment-state=resolved]')
    expect(await page.$eval('[data-testid=open-comments]', (e) => (e as HTMLElement).innerText)).toBe('0 open of 1')
    const witness = await api<RevisionComments>(engineerCookie, `/api/revisions/${revisionId}/comments`)
    expect(witness.body.open).toBe(0)
    expect(witness.body.comments[0]!.resolvedBy?.name).toBe('Henrik Salo')
    await page.close()
  })

  it('the history page lists the revision and compares revisions', async () => {
    // A second revision made by SQL with a changed gain, as the workflow's revise will make it.
    await sql`update sheet_revisions set status = 'issued', label = 'A' where id = ${revisionId}`
    await sql`insert into sheet_revisions (sheet_id, revision_index, status, document, version, result, engine_version, prepared_by, edited_by)
      select sheet_id, 1, 'draft', jsonb_set(document, '{loop,parameters,Kc,value}', '1.1'), 1, result, engine_version, prepared_by, edited_by
      from sheet_revisions where id = ${revisionId}`
    const page = await chromium.newPage()
    await signIn(page, baseUrl(), engineerEmail, demoPassword)
    await page.goto(`${baseUrl()}/sheets/${sheetId}/history`, { waitUntil: 'networkidle0' })
    expect(await page.$$eval('[data-testid=revision-table] tbody tr', (rows) => rows.map((r) => r.getAttribute('data-revision-index')))).toEqual(['1', '0'])
    await page.waitForSelector('[data-testid=diff-parameters]')
    expect(await page.$eval('[data-testid=diff-parameters]', (e) => (e as HTMLElement).innerText)).toMatch(/Kc changed\s+value: 1 → 1\.1/)
    await screenshot(page, 'review-history')
    await page.close()
  })
})

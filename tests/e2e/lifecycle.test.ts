// The demo sheet's life in the browser (issue 8, item 10): the engineer submits it from the lifecycle panel, the
// checker approves it with their password in the dialog, the engineer issues it for implementation. The server's
// answers are the witness of what the panel shows.
import type { Page } from 'puppeteer-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { demoPassword } from '../../scripts/demo-people'
import type { SheetDetail } from '../../shared/schemas/sheets'
import { api, apiSignIn, baseUrl } from './api'
import { launchBrowser, screenshot, signIn, type TestBrowser } from './browser'

let chromium: TestBrowser
let sheetId: number
beforeAll(async () => {
  chromium = await launchBrowser()
  const cookie = await apiSignIn('tomas.okafor@example.com', demoPassword)
  const sheets = await api<{ items: Array<{ id: number; loopTag: string }> }>(cookie, '/api/sheets?q=PIC-214-01&mine=all')
  sheetId = sheets.body.items.find((sheet) => sheet.loopTag === 'PIC-214-01')!.id
})
afterAll(async () => {
  await chromium?.close()
})

async function pageAs(email: string): Promise<Page> {
  const page = await chromium.newPage()
  await signIn(page, baseUrl(), email, demoPassword)
  await page.goto(`${baseUrl()}/sheets/${sheetId}`, { waitUntil: 'networkidle0' })
  await page.waitForSelector('[data-testid=lifecycle-panel]')
  return page
}
const statusOf = async (email: string) => (await api<SheetDetail>(await apiSignIn(email, demoPassword), `/api/sheets/${sheetId}`)).body.revision.status
const waitForStatus = (page: Page, status: string) => page.waitForSelector(`[data-testid=lifecycle-panel] [data-sheet-status="${status}"]`)

describe('the demo sheet from draft to issued', () => {
  it('is submitted, approved with a password and issued from the panel', async () => {
    const engineer = await pageAs('tomas.okafor@example.com')
    await screenshot(engineer, 'lifecycle-1-draft')
    await engineer.click('[data-testid=lifecycle-submit]')
    await waitForStatus(engineer, 'in check')
    expect(await statusOf('tomas.okafor@example.com')).toBe('in check')
    // The preparer cannot approve, and the panel says why.
    expect(await engineer.$('[data-testid=lifecycle-approve]')).toBeNull()

    const checker = await pageAs('henrik.salo@example.com')
    await checker.click('[data-testid=lifecycle-approve]')
    await checker.waitForSelector('[data-testid=sign-password]')
    await checker.type('[data-testid=sign-password]', demoPassword)
    await screenshot(checker, 'lifecycle-2-approve-dialog')
    await checker.click('[data-testid=lifecycle-confirm]')
    await waitForStatus(checker, 'approved')
    await checker.waitForSelector('[data-testid=signatures] li[data-holds=true]')
    expect(await statusOf('henrik.salo@example.com')).toBe('approved')

    await engineer.reload({ waitUntil: 'networkidle0' })
    await engineer.click('[data-testid=lifecycle-issue]')
    await engineer.waitForSelector('[data-testid=issue-purpose]')
    await engineer.select('[data-testid=issue-purpose]', 'implementation')
    await engineer.type('[data-testid=sign-password]', demoPassword)
    await engineer.click('[data-testid=lifecycle-confirm]')
    // The issue is a job: the panel follows it to its end, then shows the sheet as issued.
    await engineer.waitForSelector('[data-testid=issue-job]')
    await waitForStatus(engineer, 'issued')
    await engineer.waitForSelector('[data-testid=issue-job][data-status=done]')
    expect(await engineer.$eval('[data-testid=issue-job]', (element) => (element as HTMLElement).innerText)).toContain('Issued as revision 0')
    await screenshot(engineer, 'lifecycle-3-issued')
    const detail = (await api<SheetDetail>(await apiSignIn('tomas.okafor@example.com', demoPassword), `/api/sheets/${sheetId}`)).body
    expect(detail.revision).toMatchObject({ status: 'issued', label: '0' })
    expect(detail.lifecycle.signatures.map((signature) => [signature.meaning, signature.holds])).toEqual([['checked and approved', true], ['issued', true]])
    expect(await engineer.$$eval('[data-testid=signatures] li', (items) => items.length)).toBe(2)
  })
})

// The client's portal in the browser (issue 8, item 9): a sheet issued through the routes appears on the client's
// home page; the client downloads its PDF (the stored bytes, by their SHA-256) and acknowledges receipt, and the
// time shown is the one the server recorded.
import { createHash } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { demoPassword } from '../../scripts/demo-people'
import type { Portal } from '../../shared/schemas/portal'
import { api, apiSignIn, baseUrl, issueSheetAndWait } from './api'
import { launchBrowser, screenshot, signIn, type TestBrowser } from './browser'

let chromium: TestBrowser
let revisionId: number
/** Revises the sheet and issues its next revision through the routes. */
let reissue: () => Promise<{ revisionId: number }>
beforeAll(async () => {
  chromium = await launchBrowser()
  const engineer = await apiSignIn('tomas.okafor@example.com', demoPassword)
  const checker = await apiSignIn('henrik.salo@example.com', demoPassword)
  const projects = await api<{ items: Array<{ id: number; number: string }> }>(engineer, '/api/projects')
  const projectId = projects.body.items.find((project) => project.number === 'NWD-214')!.id
  const created = await api<{ id: number }>(engineer, `/api/projects/${projectId}/sheets`, {
    method: 'POST',
    body: { title: 'Suction header level loop, portal test', loopTag: 'LIC-214-31' },
  })
  expect(created.status).toBe(201)
  const step = async (cookie: string, action: string, body: Record<string, unknown>) => {
    const answer = await api<{ revisionId: number }>(cookie, `/api/sheets/${created.body.id}/${action}`, { method: 'POST', body: { version: 1, ...body } })
    expect(answer.status, `${action}: ${JSON.stringify(answer.body)}`).toBe(200)
    return answer.body
  }
  await step(engineer, 'submit', {})
  await step(checker, 'approve', { password: demoPassword })
  const issue = async () => {
    const issued = await issueSheetAndWait(engineer, created.body.id, { version: 1, purpose: 'implementation', password: demoPassword })
    expect(issued.job?.status, JSON.stringify(issued.job ?? issued.answer)).toBe('done')
    return issued.issued!
  }
  revisionId = (await issue()).revisionId
  reissue = async () => {
    await step(engineer, 'revise', {})
    await step(engineer, 'submit', {})
    await step(checker, 'approve', { password: demoPassword })
    return issue()
  }
}, 120_000)
afterAll(async () => {
  await chromium?.close()
})

describe('the client portal', () => {
  it('shows the issued revision to the client, who downloads its PDF and acknowledges receipt', async () => {
    const page = await chromium.newPage()
    await signIn(page, baseUrl(), 'dana.whitlock@example.com', demoPassword)
    const row = `[data-portal-revision="${revisionId}"]`
    await page.waitForSelector(row)
    expect(await page.$eval(row, (element) => element.getAttribute('data-status'))).toBe('issued')
    expect(await page.$eval(row, (element) => (element as HTMLElement).innerText)).toContain('Suction header level loop, portal test')

    // The link's target, fetched in the page with the client's session: the PDF the server stored at issue.
    const href = await page.$eval(`${row} [data-download]`, (link) => (link as HTMLAnchorElement).getAttribute('href'))
    expect(href).toBe(`/api/revisions/${revisionId}/pdf`)
    const fetched = await page.evaluate(async (url) => {
      const response = await fetch(url)
      const bytes = new Uint8Array(await response.arrayBuffer())
      return { status: response.status, header: response.headers.get('x-content-sha256'), bytes: Array.from(bytes) }
    }, href!)
    expect(fetched.status).toBe(200)
    const bytes = Buffer.from(fetched.bytes)
    expect(bytes.subarray(0, 5).toString()).toBe('%PDF-')
    expect(createHash('sha256').update(bytes).digest('hex')).toBe(fetched.header)

    await page.click(`${row} [data-acknowledge]`)
    await page.waitForSelector(`${row} [data-acknowledged]`)
    const client = await apiSignIn('dana.whitlock@example.com', demoPassword)
    const portal = await api<Portal>(client, '/api/portal')
    const listed = portal.body.projects.flatMap((project) => project.revisions).find((revision) => revision.revisionId === revisionId)!
    expect(listed.acknowledgedAt).not.toBeNull()
    // After a reload the acknowledgement is still shown, and no button offers it again.
    await page.reload({ waitUntil: 'networkidle0' })
    await page.waitForSelector(`${row} [data-acknowledged]`)
    expect(await page.$(`${row} [data-acknowledge]`)).toBeNull()

    // The engineer starts and issues the next revision: the first is shown superseded, still acknowledged, and the
    // new one is current, waiting for its own acknowledgement.
    const next = (await reissue()).revisionId
    await page.reload({ waitUntil: 'networkidle0' })
    await page.waitForSelector(`[data-portal-revision="${next}"] [data-acknowledge]`)
    expect(await page.$eval(`[data-portal-revision="${next}"]`, (element) => element.getAttribute('data-status'))).toBe('issued')
    expect(await page.$eval(row, (element) => element.getAttribute('data-status'))).toBe('superseded')
    expect(await page.$eval(row, (element) => (element as HTMLElement).innerText)).toContain('Superseded')
    expect(await page.$(`${row} [data-acknowledged]`)).not.toBeNull()
    await screenshot(page, 'client-portal')
    await page.close()
  }, 120_000)
})

// The /verify page signed out (issue 9 item 6): an issued PDF chosen in the browser is recognised, with its
// sheet, revision and signatures; the same file with one byte changed is not. The browser hashes the file
// (crypto.subtle); the server's stored hash is the witness.
import { mkdtemp, rm, writeFile } from 'node:fs/promises'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import type { ElementHandle } from 'puppeteer-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { demoPassword } from '../../scripts/demo-people'
import { api, apiSignIn, baseUrl, issueSheetAndWait } from './api'
import { launchBrowser, screenshot, textOf, type TestBrowser } from './browser'

let chromium: TestBrowser
let folder: string
beforeAll(async () => {
  chromium = await launchBrowser()
  folder = await mkdtemp(join(tmpdir(), 'loopwright-verify-'))
})
afterAll(async () => {
  await chromium?.close()
  await rm(folder, { recursive: true, force: true })
})

/** A new sheet of NWD-214 taken through the routes to issued; answers its number and its stored PDF. */
async function issuedSheet() {
  const engineer = await apiSignIn('tomas.okafor@example.com', demoPassword)
  const checker = await apiSignIn('henrik.salo@example.com', demoPassword)
  const projects = await api<{ items: Array<{ id: number; number: string }> }>(engineer, '/api/projects?q=NWD-214')
  const projectId = projects.body.items.find((project) => project.number === 'NWD-214')!.id
  const made = await api<{ id: number; number: string }>(engineer, `/api/projects/${projectId}/sheets`, { method: 'POST', body: { title: 'Verify page sample', loopTag: 'PIC-214-91' } })
  expect(made.status).toBe(201)
  const step = async (cookie: string, action: string, body: Record<string, unknown>) =>
    expect((await api(cookie, `/api/sheets/${made.body.id}/${action}`, { method: 'POST', body: { version: 1, ...body } })).status).toBe(200)
  await step(engineer, 'submit', {})
  await step(checker, 'approve', { password: demoPassword })
  const issued = await issueSheetAndWait(engineer, made.body.id, { version: 1, purpose: 'review', password: demoPassword })
  expect(issued.job?.status, JSON.stringify(issued.job ?? issued.answer)).toBe('done')
  const detail = await api<{ revision: { id: number } }>(engineer, `/api/sheets/${made.body.id}`)
  const download = await fetch(`${baseUrl()}/api/revisions/${detail.body.revision.id}/pdf`, { headers: { cookie: engineer } })
  expect(download.status).toBe(200)
  return { number: made.body.number, bytes: Buffer.from(await download.arrayBuffer()), sha256: download.headers.get('x-content-sha256') }
}

describe('the /verify page', () => {
  it('recognises an issued PDF signed out, and not the same file with one byte changed', async () => {
    const sheet = await issuedSheet()
    const original = join(folder, `${sheet.number}.pdf`)
    const changed = join(folder, `${sheet.number}-changed.pdf`)
    await writeFile(original, sheet.bytes)
    const altered = Buffer.from(sheet.bytes)
    altered[altered.length >> 1] ^= 0x01
    await writeFile(changed, altered)

    const page = await chromium.newPage()
    await page.setViewport({ width: 1280, height: 900 })
    await page.goto(`${baseUrl()}/verify`, { waitUntil: 'networkidle0' })
    expect(new URL(page.url()).pathname).toBe('/verify')
    const input = (await page.$('[data-testid=verify-file]')) as ElementHandle<HTMLInputElement>
    await input.uploadFile(original)
    await page.waitForSelector('[data-testid=verify-answer][data-issued=true]')
    await screenshot(page, 'verify-1-issued')
    const answer = await textOf(page, '[data-testid=verify-answer]')
    expect(answer).toContain(`Issued revision A of ${sheet.number}`)
    expect(answer).toContain('the current revision')
    expect(await textOf(page, '[data-testid=verify-hash]')).toBe(sheet.sha256)
    expect(await textOf(page, '[data-testid=verify-signatures]')).toContain('Henrik Salo (checker): checked and approved')

    const again = (await page.$('[data-testid=verify-file]')) as ElementHandle<HTMLInputElement>
    await again.uploadFile(changed)
    await page.waitForSelector('[data-testid=verify-answer][data-issued=false]')
    await screenshot(page, 'verify-2-changed')
    expect(await textOf(page, '[data-testid=verify-answer]')).toContain('Not an issued Loopwright document')
  })
})

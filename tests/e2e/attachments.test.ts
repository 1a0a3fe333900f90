// Attachments in the sheet's references, in the browser: a file chosen with the picker and one dropped are listed
// with their size and the short SHA-256 the server recorded; a file refused by its content shows the server's words
// and is not listed; a draft's file is removed again. The server is the witness (GET /api/sheets/[id]/attachments).
import { createHash } from 'node:crypto'
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import type { ElementHandle } from 'puppeteer-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { demoPassword } from '../../scripts/demo-people'
import { api, apiSignIn, baseUrl } from './api'
import { launchBrowser, screenshot, signIn, type TestBrowser } from './browser'

const engineer = 'tomas.okafor@example.com'
let chromium: TestBrowser
let cookie: string
let folder: string
beforeAll(async () => {
  chromium = await launchBrowser()
  cookie = await apiSignIn(engineer, demoPassword)
  folder = mkdtempSync(join(tmpdir(), 'loopwright-attach-'))
})
afterAll(async () => {
  await chromium?.close()
  rmSync(folder, { recursive: true, force: true })
})

describe('attachments in the sheet editor', () => {
  it('lists a chosen and a dropped file with size and short hash, shows a refusal in words, and removes a file', async () => {
    const projects = await api<any>(cookie, '/api/projects?q=NWD-214')
    const projectId = projects.body.items.find((p: any) => p.number === 'NWD-214').id
    const created = await api<any>(cookie, `/api/projects/${projectId}/sheets`, { method: 'POST', body: { title: 'Attachment screen test', loopTag: 'FIC-960-01' } })
    expect(created.status).toBe(201)
    const sheetId = created.body.id as number

    const csv = 'time_s,output_pct,flow_lps\n0,40,1.20\n1,45,1.21\n2,45,1.32\n'
    writeFileSync(join(folder, 'step test.csv'), csv)
    // A Windows program's signature under a PDF's name: refused by its content.
    writeFileSync(join(folder, 'datasheet.pdf'), Buffer.from([0x4d, 0x5a, 0x90, 0x00, 0x03, 0x00, 0x00, 0x00]))

    const page = await chromium.newPage()
    await signIn(page, baseUrl(), engineer, demoPassword)
    await page.goto(`${baseUrl()}/sheets/${sheetId}`, { waitUntil: 'networkidle0' })
    const input = (await page.waitForSelector('[data-testid=attachment-input]')) as ElementHandle<HTMLInputElement>
    await input.uploadFile(join(folder, 'step test.csv'), join(folder, 'datasheet.pdf'))
    await page.waitForSelector('[data-testid=attachment]')
    await page.waitForSelector('[data-testid=attachment-problem]')
    expect(await page.$eval('[data-testid=attachment-problem]', (element) => (element as HTMLElement).innerText)).toContain(
      'datasheet.pdf is not a PDF, PNG, JPEG, CSV or plain-text file by its content',
    )

    // A file dropped on the drop zone, as a browser hands it over (a DataTransfer holding a File).
    await page.$eval('[data-testid=attachment-drop]', (zone) => {
      const transfer = new DataTransfer()
      transfer.items.add(new File(['Valve FV-960 fails closed.\n'], 'site notes.txt', { type: 'text/plain' }))
      zone.dispatchEvent(new DragEvent('drop', { dataTransfer: transfer, bubbles: true, cancelable: true }))
    })
    await page.waitForFunction(() => document.querySelectorAll('[data-testid=attachment]').length === 2)

    const stored = (await api<any>(cookie, `/api/sheets/${sheetId}/attachments`)).body.attachments
    expect(stored.map((file: any) => file.name)).toEqual(['step test.csv', 'site notes.txt'])
    expect(stored[0].sha256).toBe(createHash('sha256').update(csv).digest('hex'))
    const rows = await page.$$eval('[data-testid=attachment]', (items) => items.map((item) => (item as HTMLElement).innerText.replace(/\s+/g, ' ')))
    expect(rows[0]).toContain(`step test.csv ${csv.length} bytes SHA-256 ${stored[0].sha256.slice(0, 12)}`)
    expect(rows[1]).toContain(`SHA-256 ${stored[1].sha256.slice(0, 12)}`)
    await screenshot(page, 'attachments')

    await page.click('[aria-label="Remove the file step test.csv"]')
    await page.waitForFunction(() => document.querySelectorAll('[data-testid=attachment]').length === 1)
    expect((await api<any>(cookie, `/api/sheets/${sheetId}/attachments`)).body.attachments.map((file: any) => file.name)).toEqual(['site notes.txt'])
    await page.close()
  })
})

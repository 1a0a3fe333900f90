// The step test in the browser (issue 10): a CSV of an invented plant (seeded noise, scripts/lib/synthetic-step-test.ts)
// is uploaded to a dosing-flow sheet, fitted, inserted into the plant block with the upload cited, tuned by SIMC, and
// the sheet's results change. The server is the witness: the stored document and result after the autosave.
import { createHash } from 'node:crypto'
import { mkdir, mkdtemp, writeFile } from 'node:fs/promises'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import type { ElementHandle, Page } from 'puppeteer-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { demoPassword } from '../../scripts/demo-people'
import { syntheticStepCsv } from '../../scripts/lib/synthetic-step-test'
import { api, apiSignIn, baseUrl } from './api'
import { launchBrowser, screenshotDir, signIn, type TestBrowser } from './browser'

const engineer = 'tomas.okafor@example.com'
// K = 2.1 %/%, τ = 9 s, θ = 3 s: far enough from the template's plant (1.4, 6 s, 2 s) that the results must move.
const plant = { gain: 2.1, timeConstant: 9, deadTime: 3 }
const csv = syntheticStepCsv({ ...plant, sampleTime: 0.2, samples: 500, stepTime: 8, outputBefore: 30, outputAfter: 38, baseline: 50, noise: 0.1, seed: 77 }, 'time (s),pump speed demand (%),dosing flow (%)')

let chromium: TestBrowser
let cookie: string
let sheetId: number
beforeAll(async () => {
  chromium = await launchBrowser()
  await mkdir(screenshotDir, { recursive: true })
  cookie = await apiSignIn(engineer, demoPassword)
  const projects = await api<any>(cookie, '/api/projects?q=NWD-214')
  const projectId = projects.body.items.find((p: any) => p.number === 'NWD-214').id
  const created = await api<any>(cookie, `/api/projects/${projectId}/sheets`, { method: 'POST', body: { title: 'Step test in the browser', loopTag: 'FIC-960-01', template: 'dead-time-flow-loop' } })
  expect(created.status).toBe(201)
  sheetId = created.body.id
})
afterAll(async () => {
  await chromium?.close()
})

const stored = async () => (await api<any>(cookie, `/api/sheets/${sheetId}`)).body
async function waitForSaved(page: Page, version: number) {
  await page.waitForFunction((v) => document.querySelector('[data-testid=save-state]')?.textContent?.includes(`Saved · version ${v}`), { timeout: 30_000 }, version)
}
const valueOf = (document: any, symbol: string) => document.loop.parameters[symbol].value as number
const sourceOf = (document: any, symbol: string) => document.parameters.find((p: any) => p.symbol === symbol).source as string

describe('a step test fitted, inserted and tuned in the browser', () => {
  it('uploads, fits, inserts the plant, applies SIMC PI, and the results change', async () => {
    const page = await chromium.newPage()
    await signIn(page, baseUrl(), engineer, demoPassword)
    await page.goto(`${baseUrl()}/sheets/${sheetId}`, { waitUntil: 'networkidle0' })
    await page.waitForSelector('[data-testid=result][data-stale=false]')
    const before = await stored()

    // Uploaded through the sheet's attachments (the file picker); the step-test panel shares their list.
    const file = join(await mkdtemp(join(tmpdir(), 'loopwright-step-')), 'dosing-step-test.csv')
    await writeFile(file, csv)
    const picker = (await page.waitForSelector('[data-testid=attachment-input]')) as ElementHandle<HTMLInputElement>
    await picker.uploadFile(file)
    await page.waitForFunction(() => document.querySelector('[data-testid=step-record]')?.textContent?.includes('dosing-step-test.csv'), { timeout: 30_000 })
    const listed = await api<any>(cookie, `/api/sheets/${sheetId}/attachments`)
    const uploaded = listed.body.attachments.find((a: any) => a.name === 'dosing-step-test.csv')
    expect(uploaded.sha256).toBe(createHash('sha256').update(csv).digest('hex'))

    await page.click('[data-testid=fit-step-test]')
    await page.waitForSelector('[data-testid=step-fit-table]')
    await page.waitForSelector('[data-testid=step-test-plot] [data-curve=least-squares]')
    await (await page.$('[data-testid=step-test-panel]'))!.screenshot({ path: `${screenshotDir}step-test-fit.png` })
    const shownGain = await page.$eval('[data-fit=leastSquares] td:nth-child(2)', (el) => Number(el.textContent!.replace('\u2212', '-')))
    // Least squares recovers K within 1 % (the tolerance of tests/calc/step-fit.test.ts), shown to 4 figures.
    expect(Math.abs(shownGain / plant.gain - 1)).toBeLessThan(0.01)

    await page.select('[data-testid=fit-target]', 'P')
    await page.click('[data-testid=insert-plant-block]')
    await waitForSaved(page, before.revision.version + 1)
    const inserted = await stored()
    const doc = inserted.revision.document
    expect(Math.abs(valueOf(doc, 'Kp') / plant.gain - 1)).toBeLessThan(0.01)
    expect(Math.abs(valueOf(doc, 'T') / plant.timeConstant - 1)).toBeLessThan(0.02)
    expect(Math.abs(valueOf(doc, 'L') - plant.deadTime)).toBeLessThan(0.2)
    expect(sourceOf(doc, 'Kp')).toContain(`dosing-step-test.csv (SHA-256 ${uploaded.sha256.slice(0, 12)})`)

    await page.click('[data-testid=suggest-tuning]')
    await page.waitForSelector('[data-rule=simc-pi] [data-testid=apply-tuning]')
    await page.click('[data-rule=simc-pi] [data-testid=preview-tuning]')
    await page.waitForFunction(() => /\d/.test(document.querySelector('[data-testid=proposed-phaseMargin]')?.textContent ?? ''), { timeout: 30_000 })
    const proposedPhaseMargin = await page.$eval('[data-testid=proposed-phaseMargin]', (el) => el.textContent!.trim())
    await (await page.$('[data-testid=tuning-panel]'))!.screenshot({ path: `${screenshotDir}step-test-tuning.png` })
    await page.click('[data-rule=simc-pi] [data-testid=apply-tuning]')
    await waitForSaved(page, inserted.revision.version + 1)

    const tuned = await stored()
    const model = { gain: valueOf(tuned.revision.document, 'Kp'), timeConstant: valueOf(tuned.revision.document, 'T'), deadTime: valueOf(tuned.revision.document, 'L') }
    // SIMC PI with τc = θ (Skogestad 2003): Kc = τ/(K·2θ), Ti = min(τ, 8θ), from the stored plant.
    expect(valueOf(tuned.revision.document, 'Kc')).toBeCloseTo(model.timeConstant / (model.gain * 2 * model.deadTime), 4)
    expect(valueOf(tuned.revision.document, 'Ti')).toBeCloseTo(Math.min(model.timeConstant, 8 * model.deadTime), 4)
    expect(sourceOf(tuned.revision.document, 'Kc')).toContain('SIMC PI')
    // The stored (server's) result moved from the template's, and its phase margin is the one the comparison showed.
    const phaseMargin = tuned.revision.result.margins.phase_margin_deg as number
    expect(phaseMargin).not.toBeCloseTo(before.revision.result.margins.phase_margin_deg, 1)
    expect(proposedPhaseMargin).toBe(`${Number(phaseMargin.toPrecision(4))}°`.replace('-', '\u2212'))
    await page.close()
  })
})

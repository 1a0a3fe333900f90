// The sheet editor in the browser: sheets started from every template, a gain driven unstable and back, a
// half-typed denominator named at its field, a cascade built by nesting an inner loop, everything kept across a
// reload, and a stale save from a second tab resolved with nothing lost. What the screen shows is checked against
// the server (POST /api/calculate and GET /api/sheets/[id]): the server is the witness.
import { readFileSync, readdirSync } from 'node:fs'
import type { Page } from 'puppeteer-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { demoPassword } from '../../scripts/demo-people'
import { loopFileOf, sheetDocumentSchema, type SheetDocument } from '../../shared/schemas/sheet'
import { closeLoopAround } from '../../app/utils/structureTree'
import { api, apiSignIn, baseUrl } from './api'
import { launchBrowser, screenshot, screenshotDir, signIn, textOf, typesetTexOf, bareTex, type TestBrowser } from './browser'

const engineer = 'tomas.okafor@example.com'
const templates = readdirSync(new URL('../../sheets/', import.meta.url)).filter((f) => f.endsWith('.json')).map((f) => f.replace(/\.json$/, ''))
const templateOf = (name: string) => JSON.parse(readFileSync(new URL(`../../sheets/${name}.json`, import.meta.url), 'utf8'))

let chromium: TestBrowser
let cookie: string
let projectId: number
beforeAll(async () => {
  chromium = await launchBrowser()
  cookie = await apiSignIn(engineer, demoPassword)
  const projects = await api<any>(cookie, '/api/projects?q=NWD-214')
  projectId = projects.body.items.find((p: any) => p.number === 'NWD-214').id
})
afterAll(async () => {
  await chromium?.close()
})

let tagCounter = 0
async function newSheet(template: string) {
  tagCounter++
  const created = await api<any>(cookie, `/api/projects/${projectId}/sheets`, { method: 'POST', body: { title: `Editor test ${tagCounter}`, loopTag: `TIC-950-${String(tagCounter).padStart(2, '0')}`, template } })
  expect(created.status).toBe(201)
  return created.body.id as number
}
const stored = async (id: number) => (await api<any>(cookie, `/api/sheets/${id}`)).body
const verdictWords = (stability: string) => (stability === 'stable' ? 'Stable' : stability === 'marginal' ? 'Marginally stable' : 'Unstable')

async function signedInPage() {
  const page = await chromium.newPage()
  await signIn(page, baseUrl(), engineer, demoPassword)
  return page
}
async function openSheet(page: Page, id: number) {
  await page.goto(`${baseUrl()}/sheets/${id}`, { waitUntil: 'networkidle0' })
  await page.waitForSelector('[data-testid=result][data-stale=false]')
}
const field = (path: string) => `[data-field="${path}"]`
async function replaceText(page: Page, path: string, text: string) {
  await page.focus(field(path))
  await page.keyboard.down('Control')
  await page.keyboard.press('KeyA')
  await page.keyboard.up('Control')
  await page.keyboard.press('Backspace')
  await page.keyboard.type(text, { delay: 10 })
}
async function parameterIndex(page: Page, symbol: string) {
  return page.$$eval('[data-parameter]', (rows, wanted) => rows.findIndex((row) => row.getAttribute('data-parameter') === wanted), symbol)
}
async function blockIndex(page: Page, id: string) {
  return page.$$eval('[data-testid=block-list] [data-block]', (rows, wanted) => rows.findIndex((row) => row.getAttribute('data-block') === wanted), id)
}
async function waitForState(page: Page, state: string) {
  try {
    await page.waitForSelector(`[data-testid=save-state][data-state="${state}"]`, { timeout: 20_000 })
  } catch {
    const shown = await page.$eval('[data-testid=save-state]', (el) => `${el.getAttribute('data-state')}: ${(el.parentElement as HTMLElement).innerText}`).catch(() => 'no save state shown')
    await screenshot(page, `failed-${state}`)
    throw new Error(`the save state did not become "${state}"; it shows ${shown}`)
  }
}
async function verdict(page: Page, words: string) {
  await page.waitForFunction((w) => document.querySelector('[data-testid=result][data-stale=false] [data-testid=stability-verdict]')?.textContent?.trim() === w, { timeout: 15_000 }, words)
}

describe('the sheet editor', () => {
  it('starts a sheet from each template on the workbench, and shows the server\'s verdict', async () => {
    const page = await signedInPage()
    for (const name of templates) {
      const template = templateOf(name)
      await page.goto(`${baseUrl()}/workbench`, { waitUntil: 'networkidle0' })
      await page.select('[data-testid=template-select]', name)
      await page.click('[data-testid=load-template]')
      await page.waitForFunction((title) => document.querySelector('[data-testid=result]')?.textContent?.includes(title), {}, template.document.loop.title ?? template.title)
      await page.click('[data-testid=start-sheet-open]')
      await page.waitForFunction(() => (document.querySelectorAll('[data-testid=start-project] option').length ?? 0) > 1)
      await page.select('[data-testid=start-project]', String(projectId))
      await page.click('#start-tag', { count: 3 })
      await page.keyboard.type(`TIC-960-${templates.indexOf(name) + 1}`)
      await Promise.all([page.waitForNavigation({ waitUntil: 'networkidle0' }).catch(() => null), page.click('[data-testid=start-sheet-submit]')])
      await page.waitForFunction(() => /\/sheets\/\d+$/.test(location.pathname))
      await page.waitForSelector('[data-testid=live-results] [data-testid=result][data-stale=false] [data-testid=stability-verdict]')
      const id = Number(new URL(page.url()).pathname.split('/').at(-1))
      const sheet = await stored(id)
      // The whole template: its loop and its texts, stored by the server with its own result.
      expect(loopFileOf(sheet.revision.document)).toEqual(loopFileOf(sheetDocumentSchema.parse(template.document)))
      expect(sheet.revision.document.scope).toBe(template.document.scope ?? '')
      expect(await textOf(page, '[data-testid=stability-verdict]')).toBe(verdictWords(sheet.revision.result.stability))
      expect(await page.$eval(field('scope'), (el) => (el as HTMLTextAreaElement).value)).toBe(template.document.scope ?? '')
      await waitForState(page, 'saved')
    }
  }, 240_000)

  it('turns the verdict unstable as a gain rises, and stable again', async () => {
    const id = await newSheet('pi-pressure-loop')
    const loop = loopFileOf((await stored(id)).revision.document)
    // The server finds the gain: the first of these at which the loop is unstable.
    let unstableGain: number | null = null
    for (const gain of [5, 10, 20, 50, 100]) {
      const answer = await api<any>(cookie, '/api/calculate', { method: 'POST', body: { ...loop, parameters: { ...loop.parameters, Kc: { ...loop.parameters.Kc, min: undefined, max: undefined, value: gain } } } })
      expect(answer.status).toBe(200)
      if (answer.body.stability === 'unstable') {
        unstableGain = gain
        break
      }
    }
    expect(unstableGain).not.toBeNull()
    const page = await signedInPage()
    await openSheet(page, id)
    await verdict(page, 'Stable')
    const kc = await parameterIndex(page, 'Kc')
    await replaceText(page, `parameters[${kc}].max`, '')
    await replaceText(page, `parameters[${kc}].value`, String(unstableGain))
    await verdict(page, 'Unstable')
    expect(await page.$$eval('[data-testid=pole-zero-map] [data-root=pole][stroke="#a3231b"]', (poles) => poles.length)).toBeGreaterThan(0)
    await replaceText(page, `parameters[${kc}].value`, String(loop.parameters.Kc!.value))
    await replaceText(page, `parameters[${kc}].max`, String(loop.parameters.Kc!.max))
    await verdict(page, 'Stable')
    await waitForState(page, 'saved')
    expect((await stored(id)).revision.result.stability).toBe('stable')
  })

  it('names a half-typed denominator at its field and keeps it unsaved and local', async () => {
    const id = await newSheet('pi-pressure-loop')
    const before = await stored(id)
    const page = await signedInPage()
    await openSheet(page, id)
    const p = await blockIndex(page, 'P')
    const den = before.revision.document.loop.blocks.P.den
    await replaceText(page, `blocks[${p}].den`, 's^')
    const at = `[data-error-for="blocks[${p}].den"]`
    await page.waitForSelector(at)
    // The engine's own words (calc-contract.md, "Bad input").
    expect(await textOf(page, at)).toBe('"s^" is not a complete expression')
    await waitForState(page, 'refused')
    expect(await page.$eval(field(`blocks[${p}].den`), (el) => el.getAttribute('aria-invalid'))).toBe('true')
    const kept = await page.evaluate((key) => localStorage.getItem(key), `loopwright-sheet-${id}`)
    expect(JSON.parse(kept!).form.blocks[p].den).toBe('s^')
    expect((await stored(id)).revision.document.loop.blocks.P.den).toBe(den)
    expect((await stored(id)).revision.version).toBe(before.revision.version)
    await replaceText(page, `blocks[${p}].den`, den)
    await waitForState(page, 'saved')
    // The save and the live engine (a Web Worker) answer independently; on a loaded machine the worker's answer,
    // which clears the message, may come after the server's.
    await page.waitForFunction((selector) => !document.querySelector(selector), { timeout: 20_000 }, at)
    expect(await page.evaluate((key) => localStorage.getItem(key), `loopwright-sheet-${id}`)).toBeNull()
  })

  it('builds a cascade by nesting an inner loop, redraws the diagram and T(s), and keeps it all across a reload', async () => {
    const id = await newSheet('pi-pressure-loop')
    const document: SheetDocument = (await stored(id)).revision.document
    const page = await signedInPage()
    await page.setViewport({ width: 1280, height: 900 })
    await openSheet(page, id)
    const junctions = () => page.$$eval('[data-testid=loop-diagram] [data-shape=junction]', (found) => found.length)
    expect(await junctions()).toBe(1)
    // T(s) as KaTeX's MathML copies hold it: one formula, or T(s) = N(s)/D(s) with N(s) and D(s) written out.
    const symbolic = (settled = '') => typesetTexOf(page, `[data-testid=result]${settled} [data-testid=closed-loop-symbolic]`)
    const before = await symbolic()

    // The plant P gets a loop of its own (a cascade's inner loop), and the actuator A moves inside it.
    await page.click('[data-path="forward.2"] > div > [data-action=close-loop]')
    await page.waitForFunction(() => window.document.querySelectorAll('[data-testid=loop-diagram] [data-shape=junction]').length === 2).catch(async (error) => {
      await screenshot(page, 'failed-cascade')
      throw error
    })
    const cascade = closeLoopAround(document.loop.structure, ['forward', 2])
    expect(await page.$eval('[data-testid=loop-diagram]', (el) => el.getAttribute('data-structure'))).toBe('loop(C · A · loop(P; return unity; negative); return S; negative)')

    const witness = await api<any>(cookie, '/api/calculate', { method: 'POST', body: { ...loopFileOf(document), structure: cascade } })
    expect(witness.status).toBe(200)
    const denominator = bareTex(witness.body.closed_loop.den_tex)
    for (const deadline = Date.now() + 15_000; !bareTex(await symbolic('[data-stale=false]')).includes(denominator); ) {
      if (Date.now() > deadline) throw new Error(`T(s) of the cascade did not appear: ${await symbolic()}`)
      await new Promise((resolve) => setTimeout(resolve, 100))
    }
    expect(await symbolic()).not.toBe(before)
    expect(await textOf(page, '[data-testid=stability-verdict]')).toBe(verdictWords(witness.body.stability))

    await replaceText(page, 'scope', 'Discharge pressure of the booster header, with the pump speed as an inner loop.')
    const kc = await parameterIndex(page, 'Kc')
    await replaceText(page, `parameters[${kc}].source`, 'Tuning proposed on this sheet, to be confirmed on site')
    const assumptions = document.assumptions.length
    await page.click('[data-testid=add-assumptions]')
    // An empty assumption is refused by the shared schema: the sheet waits, unsaved, with the message at the field.
    await page.waitForSelector(`[data-error-for="assumptions[${assumptions}]"]`)
    await waitForState(page, 'incomplete')
    await replaceText(page, `assumptions[${assumptions}]`, 'The header pressure transmitter is calibrated.')
    await waitForState(page, 'saved')
    await screenshot(page, 'sheet-editor-1280')
    for (const part of ['parameter-table', 'block-list', 'structure-editor', 'live-results'])
      await (await page.$(`[data-testid=${part}]`))!.screenshot({ path: `${screenshotDir}sheet-${part}-1280.png` })
    await page.setViewport({ width: 1920, height: 1080 })
    await screenshot(page, 'sheet-editor-1920')
    const diagram = await page.$('[data-testid=loop-diagram]')
    await diagram!.screenshot({ path: `${screenshotDir}loop-diagram-cascade.png` })
    await page.setViewport({ width: 1280, height: 900 })

    await page.reload({ waitUntil: 'networkidle0' })
    await page.waitForSelector('[data-testid=result][data-stale=false]')
    expect(await page.$eval(field('scope'), (el) => (el as HTMLTextAreaElement).value)).toBe('Discharge pressure of the booster header, with the pump speed as an inner loop.')
    expect(await page.$eval(field(`parameters[${kc}].source`), (el) => (el as HTMLInputElement).value)).toBe('Tuning proposed on this sheet, to be confirmed on site')
    expect(await page.$eval(field(`assumptions[${assumptions}]`), (el) => (el as HTMLTextAreaElement).value)).toBe('The header pressure transmitter is calibrated.')
    expect(await junctions()).toBe(2)
    await waitForState(page, 'saved')
    const saved = await stored(id)
    expect(saved.revision.document.loop.structure).toEqual(cascade)
    expect(saved.revision.document.assumptions).toEqual([...document.assumptions, 'The header pressure transmitter is calibrated.'])
    expect(saved.revision.result.closed_loop.den).toEqual(witness.body.closed_loop.den)
  }, 240_000)

  it('resolves a stale save from a second tab field by field, with nothing lost', async () => {
    const id = await newSheet('integrating-level-loop')
    const first = await signedInPage()
    const context = first.browserContext()
    const second = await chromium.newPage(context)
    await openSheet(first, id)
    await openSheet(second, id)
    const version = (await stored(id)).revision.version

    await replaceText(first, 'scope', 'Scope written in the first tab.')
    await waitForState(first, 'saved')
    expect((await stored(id)).revision.version).toBe(version + 1)

    await replaceText(second, 'conclusions', 'Conclusions written in the second tab.')
    await second.waitForSelector('[data-testid=conflict-panel]', { timeout: 20_000 })
    await waitForState(second, 'conflict')
    const units = await second.$$eval('[data-conflict]', (rows) => rows.map((row) => ({ key: row.getAttribute('data-conflict'), chosen: (row.querySelector('input:checked') as HTMLInputElement | null)?.value, text: (row as HTMLElement).innerText })))
    expect(units.map((u) => u.key).sort()).toEqual(['conclusions', 'scope'])
    // Each field starts on the side that changed it: the scope from the first tab, the conclusions of this one.
    expect(units.find((u) => u.key === 'scope')!.chosen).toBe('stored')
    expect(units.find((u) => u.key === 'scope')!.text).toContain('Scope written in the first tab.')
    expect(units.find((u) => u.key === 'conclusions')!.chosen).toBe('mine')
    expect(units.find((u) => u.key === 'conclusions')!.text).toContain('Conclusions written in the second tab.')
    await screenshot(second, 'sheet-conflict-1280')
    await second.click('[data-testid=conflict-apply]')
    await waitForState(second, 'saved')

    const saved = await stored(id)
    expect(saved.revision.version).toBe(version + 2)
    expect(saved.revision.document.scope).toBe('Scope written in the first tab.')
    expect(saved.revision.document.conclusions).toBe('Conclusions written in the second tab.')
    expect(await second.$eval(field('scope'), (el) => (el as HTMLTextAreaElement).value)).toBe('Scope written in the first tab.')
  })

  it('keeps retrying while the server does not answer, and saves once it does', async () => {
    const id = await newSheet('dead-time-flow-loop')
    const page = await signedInPage()
    await openSheet(page, id)
    // The server out of reach (as while it restarts): the browser's network cut, then restored.
    await page.setOfflineMode(true)
    await replaceText(page, 'conclusions', 'Written while the server was away.')
    await waitForState(page, 'offline')
    expect(await textOf(page, '[data-testid=save-state]')).toMatch(/^Offline: retrying/)
    await page.setOfflineMode(false)
    await waitForState(page, 'saved')
    expect((await stored(id)).revision.document.conclusions).toBe('Written while the server was away.')
  })
})

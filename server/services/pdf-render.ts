// PDFs of sheets and packages, printed by Debian's Chromium through puppeteer-core from the print view
// (/sheets/[id]/print). One browser is kept warm and shared by every render, relaunched when it dies; at most
// MAX_PAGES renders hold a tab at once, the rest wait their turn. The page is opened on loopback with a render
// token (server/utils/render-token.ts), not a person's session, and every request it makes outside this app's own
// origin is aborted, so a render never reaches the internet and never waits on it.
import { sha256Hex } from '../utils/content-hash'
import { mkdtemp, rm } from 'node:fs/promises'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import puppeteer, { type Browser, type BrowserContext, type Page } from 'puppeteer-core'
import { PDFDocument } from 'pdf-lib'
import { useDb } from '../utils/db'
import { makeRenderToken } from '../utils/render-token'
import { sheetPdfFileName, type PrintIssue } from '../../shared/schemas/print'
import { issuedForWords } from '../../shared/schemas/lifecycle'
import { printSheet } from './print-data'

export interface RenderedPdf {
  bytes: Buffer
  sha256: string
  pages: number
  fileName: string
  /** Requests of the page that were refused for leaving the app (none expected: the page loads only its own files). */
  blockedRequests: string[]
  /** Milliseconds of each part of a sheet's render, in order (a preview answers them as Server-Timing; the bench reads them). */
  timings?: RenderTimings
}

/** Where a sheet's render spends its time: its print data, waiting for a tab, the print view until ready, Chromium's print, pdf-lib's metadata. */
export interface RenderTimings {
  data: number
  queue: number
  ready: number
  print: number
  finish: number
}

export interface SheetRenderOptions {
  issue?: PrintIssue
}

/** A render that could not be made; `message` says why, for the person who asked. */
export class RenderError extends Error {}

/** pdf-lib's parse and save of one sheet without pausing for the event loop (one sheet takes a few milliseconds). */
export const fullSpeed = Number.POSITIVE_INFINITY

/**
 * Debian's chromium-headless-shell (Chromium's old headless mode, a browser without the desktop browser's layers):
 * measured against Debian's chromium of the same version with scripts/bench-pdf.ts, back to back on the same build,
 * one sheet's median 0.515 → 0.422 s (Chromium's print 277 → 173 ms) and the peak PSS of the app with its browser
 * 745 → 630 MiB, as it prints inside the renderer (no printing or storage utility processes).
 */
const CHROMIUM = process.env.LOOPWRIGHT_CHROMIUM ?? '/usr/bin/chromium-headless-shell'
/** The headless shell is started as one (puppeteer's `headless: 'shell'`); a full Chromium in its new headless mode. */
const SHELL = /headless[-_]shell$/.test(CHROMIUM)
/**
 * Tabs printing at once. One: on the reference machine (2 cores) a 20-sheet package printed in 14.2 s with one tab
 * and 15.3 s with two (scripts/bench-package.ts), as two renderers fight over the cores and the browser process, and
 * each tab's renderer holds about 400 MiB at its peak.
 */
const MAX_PAGES = Number(process.env.LOOPWRIGHT_PDF_PAGES ?? 1)
/** How many renders one caller may usefully start at once (a package's sheets): the tabs there are. */
export const renderTabs = MAX_PAGES
/** Longest wait for the print view to say it is ready (fonts in, formulas fitted). */
const READY_TIMEOUT_MS = 30_000
/**
 * The render tab's screen, in CSS px: app/assets/css/print.css hides a print view on the tab's own screen at exactly
 * this size, which no paper's page area has. Tried earlier: 680 or 1200 wide made the print's own layout about twice as
 * long as at 794 or 800 (the print view's breakpoints then differ between the screen and the paper).
 */
const TAB_VIEWPORT = { width: 800, height: 600 }

let browserStarting: Promise<{ browser: Browser; userDataDir: string }> | null = null

async function launch() {
  const userDataDir = await mkdtemp(join(tmpdir(), 'loopwright-pdf-'))
  const browser = await puppeteer.launch({
    executablePath: CHROMIUM,
    headless: SHELL ? 'shell' : true,
    userDataDir,
    defaultViewport: TAB_VIEWPORT,
    args: [
      ...(SHELL ? [] : ['--headless=new']),
      '--no-sandbox',
      '--disable-gpu',
      '--disable-dev-shm-usage',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
      '--disable-extensions',
      '--disable-quic',
      '--no-first-run',
      '--no-default-browser-check',
      // Text measured without hinting, as the printed page has no pixels to snap to: the headless shell hints by
      // default, its lines came out wider and one demo sheet took a page more; unhinted, its text breaks exactly
      // as the desktop Chromium's (pdftotext of the four demo sheets, the same page for page).
      '--font-render-hinting=none',
      // No zygote processes and no spare renderer kept waiting: fewer processes, less memory (scripts/bench-pdf.ts).
      '--no-zygote',
      '--in-process-gpu',
      // WebUIOmniboxPopup, WebUIOmniboxAimPopup: the address bar's suggestion pop-ups, preloaded for every window
      // in a renderer of their own (chrome://omnibox-popup.top-chrome, seen in browser.targets()) though nobody types
      // in a headless one; that renderer held about 100 MiB PSS (measured with a scratch launch of this browser).
      '--disable-features=SpareRendererForSitePerProcess,AudioServiceOutOfProcess,WebUIOmniboxPopup,WebUIOmniboxAimPopup',
      '--enable-features=NetworkServiceInProcess2',
      // `gc` for the render tabs' pages (collectAfterPrint below); LOOPWRIGHT_PDF_JS_FLAGS adds V8 flags of one's own.
      `--js-flags=--expose-gc${process.env.LOOPWRIGHT_PDF_JS_FLAGS ? ` ${process.env.LOOPWRIGHT_PDF_JS_FLAGS}` : ''}`,
    ],
  })
  // The blank tab Chromium opens at launch holds a renderer process of its own (seen in the bench's breakdown):
  // renders use tabs of their own context, so it is closed.
  for (const blank of await browser.pages()) await blank.close().catch(() => {})
  browser.on('disconnected', () => {
    // A browser that died (or was closed) is launched afresh by the next render, with new tabs.
    browserStarting = null
    forgetTabs()
    rm(userDataDir, { recursive: true, force: true, maxRetries: 3 }).catch(() => {})
  })
  return { browser, userDataDir }
}

async function warmBrowser(): Promise<Browser> {
  browserStarting ??= launch().catch((error: unknown) => {
    browserStarting = null
    throw error
  })
  const { browser } = await browserStarting
  if (!browser.connected) {
    browserStarting = null
    return warmBrowser()
  }
  return browser
}

/** Closes the warm browser (server shutdown, tests). */
export async function closeRenderer() {
  const starting = browserStarting
  browserStarting = null
  forgetTabs()
  if (starting) await (await starting).browser.close().catch(() => {})
}

/**
 * A tab kept warm between renders: it stays on the app's print view, so the next render moves it there through the
 * app's router (window.loopwrightPrint of the print page) instead of loading the page, its scripts and fonts again.
 * Measured on PIC-214-01 (scripts/bench-pdf.ts): a fresh context and a page load per render spent most of its
 * time compiling the app's scripts, hydrating and laying the page out again.
 */
interface Tab {
  page: Page
  /** Renders done in it; a tab is closed after MAX_RENDERS_PER_TAB, so nothing it keeps can grow without end. */
  renders: number
  /** Whether the app is loaded in it (the next render can go through the router). */
  warm: boolean
  /** The outside requests of the render in hand. */
  blocked: string[]
  /** Told of an answer of the print data route that was not 200 (the page then shows an error, never ready). */
  onRefused: ((status: number) => void) | null
}
const tabs: Tab[] = []
const idle: Tab[] = []
const MAX_RENDERS_PER_TAB = 200
let context: Promise<BrowserContext> | null = null
function forgetTabs() {
  tabs.length = 0
  idle.length = 0
  context = null
}

// Tabs are opened one at a time. Measured here: two windows opened at once in a fresh headless Chromium can land
// in one window, one of them hidden (document.visibilityState "hidden"), and a hidden tab gets no animation frames,
// so its print view never says it is ready (the first renders after a restart failed so; opened in turn, every
// window was visible in every try).
let opening: Promise<unknown> = Promise.resolve()
function openTab(browser: Browser, origin: string): Promise<Tab> {
  const opened = opening.then(() => openTabNow(browser, origin))
  opening = opened.catch(() => {})
  return opened
}

async function openTabNow(browser: Browser, origin: string): Promise<Tab> {
  context ??= browser.createBrowserContext()
  const shared = await context.catch((error: unknown) => {
    context = null
    throw error
  })
  // Each tab in a window of its own: a background tab of a shared window gets no animation frames and is throttled
  // (the print view no longer waits for frames, but the tab is kept a foreground one).
  const page = await shared.newPage({ type: 'window' })
  const tab: Tab = { page, renders: 0, warm: false, blocked: [], onRefused: null }
  await page.setRequestInterception(true)
  page.on('request', (request) => {
    const url = request.url()
    if (url.startsWith(`${origin}/`) || url.startsWith('data:') || url.startsWith('blob:')) return void request.continue()
    tab.blocked.push(url)
    void request.abort('blockedbyclient')
  })
  page.on('response', (response) => {
    const url = response.url()
    const printData = url.startsWith(`${origin}/api/print/`) || url.startsWith(`${origin}/api/package-print/`)
    if (printData && response.status() !== 200) tab.onRefused?.(response.status())
  })
  await page.emulateMediaType('print')
  return tab
}

function dropTab(tab: Tab) {
  const index = tabs.indexOf(tab)
  if (index >= 0) tabs.splice(index, 1)
  void tab.page.close().catch(() => {})
}

// A counting semaphore: at most MAX_PAGES tabs at once, first come first served.
let busy = 0
const waiting: (() => void)[] = []
async function withTab<T>(work: (tab: Tab) => Promise<T>): Promise<T> {
  if (busy >= MAX_PAGES) await new Promise<void>((resolve) => waiting.push(resolve))
  else busy++
  let tab: Tab | undefined
  try {
    const browser = await warmBrowser()
    tab = idle.pop()
    if (tab && (!tabs.includes(tab) || tab.page.isClosed())) tab = undefined
    if (!tab) {
      tab = await openTab(browser, loopbackOrigin())
      tabs.push(tab)
    }
    const result = await work(tab)
    if (++tab.renders < MAX_RENDERS_PER_TAB) idle.push(tab)
    else dropTab(tab)
    return result
  } catch (error) {
    // A tab that failed may hold an error page or a half-made view: it is closed, and the next render opens a new one.
    if (tab) dropTab(tab)
    throw error
  } finally {
    const next = waiting.shift()
    if (next) next()
    else busy--
  }
}

/** The app itself on loopback: the port Nitro listens on (NITRO_PORT, PORT, or its default 3000). */
export function loopbackOrigin() {
  return `http://127.0.0.1:${process.env.NITRO_PORT ?? process.env.PORT ?? '3000'}`
}

/** What a print in a tab answers: the PDF, and the requests of the page that were refused for leaving the app. */
interface Printed {
  bytes: Uint8Array
  blockedRequests: string[]
  /** performance.now() when a tab was had, the view was ready, and the print was back. */
  marks: { tab: number; ready: number; printed: number }
}

/**
 * Opens what `open` loads in a warm tab, waits for `readySelector`, and prints it, with every request that is not
 * to this app aborted and listed. `leavesApp`: `open` leaves the app's print view, so the next render loads it again.
 */
function printInTab(open: (tab: Tab) => Promise<void>, readySelector: string, leavesApp: boolean): Promise<Printed> {
  return withTab(async (tab) => {
    const { page } = tab
    const tabAt = performance.now()
    tab.blocked = []
    const refused = new Promise<never>((_, reject) => {
      tab.onRefused = (status) => reject(new RenderError(`The print data answered ${status}`))
    })
    refused.catch(() => {})
    try {
      if (leavesApp) tab.warm = false
      await open(tab)
      await Promise.race([
        // The element found is let go at once: a handle kept holds its view, and with it the whole print view
        // (its Vue components and every DOM node), in the warm tab for as long as the tab lives. Measured with CDP's
        // Memory.getDOMCounters: about 8,600 nodes more after each render, even after a forced garbage collection.
        page
          .waitForSelector(readySelector, { timeout: READY_TIMEOUT_MS })
          .then((found) => found?.dispose())
          .catch(async (error: unknown) => {
            throw new RenderError(`The print view was not ready within ${READY_TIMEOUT_MS / 1000} s (${await pageState(page)})`, { cause: error })
          }),
        refused,
      ])
      const readyAt = performance.now()
      // The view said it is ready once its fonts were in: puppeteer's own wait for them (a round trip) is not needed.
      const bytes = await page.pdf({ preferCSSPageSize: true, printBackground: true, waitForFonts: false, timeout: READY_TIMEOUT_MS })
      tab.warm = !leavesApp
      collectAfterPrint(page)
      return { bytes, blockedRequests: [...tab.blocked], marks: { tab: tabAt, ready: readyAt, printed: performance.now() } }
    } finally {
      tab.onRefused = null
    }
  })
}

/**
 * Lets the printed view go (a sheet's print view takes itself off the page: `loopwrightRelease` of
 * app/pages/sheets/[id]/print.vue), then asks the tab's renderer for a full garbage collection and does not wait for
 * it (V8's `gc({ type: 'major', execution: 'async' })`, exposed by --expose-gc: the collection runs whole, in a task
 * of its own after this call; it is not an incremental one). In Chromium traces of a package it took 35 to 91 ms of
 * the renderer's main thread while the printed view was still on the page, and 38 to 61 ms with the view let go first
 * (it no longer marks the view). Each printed view is garbage once it is let go, but the renderer collected them
 * late: its memory climbed render after render to a plateau of about 320 MiB PSS. Measured with
 * scripts/bench-package.ts and scripts/bench-pdf.ts, in runs taken in turn with and without the collection: the
 * 20-sheet package's peak PSS 819 → 608 to 645 MiB (the renderer stays near 170 to 240 MiB), one sheet's 556 to 568 →
 * 468 to 471 MiB. The renderer's CPU moved within the machine's noise (package 8.96 → 9.56 to 10.45 s, one sheet 380
 * to 403 → 350 to 465 ms a render). A forced collection waited for (CDP HeapProfiler.collectGarbage) cost about
 * 140 ms of every render; a moderate memory-pressure signal instead (CDP Memory.simulatePressureNotification) let the
 * package's peak PSS reach 641 to 782 MiB.
 */
function collectAfterPrint(page: Page) {
  void page.evaluate(`Promise.resolve(window.loopwrightRelease?.()).then(() => globalThis.gc?.({ type: 'major', execution: 'async' }))`).catch(() => {})
}

/** What a tab showed when its print view was not ready, in a few words, for the render's error. */
async function pageState(page: Page): Promise<string> {
  const state = await page
    .evaluate(`(() => {
      const view = document.querySelector('.lw-print')
      return {
        url: location.pathname,
        view: view ? view.getAttribute('data-print-ready') : null,
        visibility: document.visibilityState,
        text: (document.body?.innerText ?? '').replace(/\\s+/g, ' ').slice(0, 160),
      }
    })()`)
    .catch((error: unknown) => ({ error: error instanceof Error ? error.message : String(error) }))
  return JSON.stringify(state)
}

/**
 * Prints the print page of this app at `path`, a sheet's (`/sheets/[id]/print?render=<token>`) or a package's cover
 * (`/packages/[id]/print?render=<token>`): through the app's router in a warm tab, ready when the `.lw-print` of its
 * token says so, under the blocking of every request that leaves the app. The cover loaded afresh with its own
 * `page.goto` took about 390 ms of a 20-sheet package's tail (scratch timings in renderPackagePdf) and left the tab
 * cold for the next sheet.
 */
export async function printAppPage(path: string, data?: string): Promise<Printed> {
  const origin = loopbackOrigin()
  const token = new URL(path, origin).searchParams.get('render')
  if (!token) throw new RenderError('A print needs a render token')
  // The view of this render (its token: base64url and a dot, nothing to escape), not the one the tab showed before.
  const ready = `.lw-print[data-print-ready="true"][data-render="${token}"]`
  return printInTab(
    async ({ page, warm }) => {
      // Run in the page (the server's types know no `window`): the print view's own way to the next render, in one
      // call, with the view's data (`data`, JSON) handed over so that the view fetches nothing. In Chromium traces
      // of a render, that fetch took 18 to 31 ms between the router's move and the view's mount.
      const handed = data === undefined ? '' : `, JSON.parse(${JSON.stringify(data)})`
      if (warm && (await page.evaluate(`typeof window.loopwrightPrint === "function" && (void window.loopwrightPrint(${JSON.stringify(path)}${handed}), true)`))) return
      const response = await page.goto(`${origin}${path}`, { waitUntil: 'load', timeout: READY_TIMEOUT_MS })
      if (!response || !response.ok()) throw new RenderError(`The print view answered ${response?.status() ?? 'nothing'}`)
    },
    ready,
    false,
  )
}

/**
 * For the tests: `html` printed in a render tab under the same blocking as a sheet, ready once `readySelector`
 * shows; it answers which requests were refused. Proves that a page reaching outside reaches nothing.
 */
export function printHtmlForTest(html: string, readySelector: string): Promise<Printed> {
  return printInTab(({ page }) => page.setContent(html, { waitUntil: 'load', timeout: READY_TIMEOUT_MS }), readySelector, true)
}

/**
 * The print data of the renders under way, by render token, as the print view's data route answers it (JSON): made
 * before a render waits for its tab, so that a package's next sheet has its data (the revision, its history, its
 * signatures and attachments) while the sheet before it prints, and the view's fetch is answered from memory. An
 * entry lives only while its render does.
 */
const preparedPrints = new Map<string, string>()

/** The print data made for the render of `token` (checked by the caller) while that render runs. */
export function preparedPrintData(token: string): string | undefined {
  return preparedPrints.get(token)
}

/** The site's address for a print's "verify at" line: the configured one, else this app on loopback (where its render tabs reach it). */
export function printSiteUrl() {
  return useRuntimeConfig().public.siteUrl || loopbackOrigin()
}

/** One revision of a sheet as a PDF: the issued document when `options.issue` is given or the revision is issued, else a preview marked preliminary. */
export async function renderSheetPdf(revisionId: number, options: SheetRenderOptions = {}): Promise<RenderedPdf> {
  const startedAt = performance.now()
  const detail = await printSheet(useDb(), revisionId, options.issue ?? null, printSiteUrl())
  if (!detail) throw new RenderError(`There is no revision ${revisionId}`)
  const token = makeRenderToken(revisionId, options.issue ?? null)
  preparedPrints.set(token, JSON.stringify(detail))
  const preparedAt = performance.now()
  let printed: Printed
  try {
    printed = await printAppPage(`/sheets/${detail.id}/print?render=${encodeURIComponent(token)}`, preparedPrints.get(token))
  } finally {
    preparedPrints.delete(token)
  }
  // As printed: during an issue, the revision with the issue's label and status.
  const { revision } = detail
  const pdf = await PDFDocument.load(printed.bytes, { updateMetadata: false, parseSpeed: fullSpeed })
  const issued = revision.status === 'issued' || revision.status === 'superseded'
  pdf.setTitle(`${detail.number} ${detail.title}`, { showInWindowTitleBar: true })
  pdf.setAuthor(`${detail.firm.name}; prepared by ${revision.preparedBy.name}`)
  pdf.setSubject(
    issued
      ? `Design calculation ${detail.number}, revision ${revision.label}${options.issue ? `, ${issuedForWords(options.issue.purpose)}` : ''}, project ${detail.projectNumber} for ${detail.clientName}`
      : `Preliminary design calculation ${detail.number} (${revision.status}, not issued), project ${detail.projectNumber} for ${detail.clientName}`,
  )
  pdf.setKeywords([detail.projectNumber, detail.number, detail.loopTag, issued ? `revision ${revision.label}` : 'preliminary', 'control loop', 'design calculation'])
  pdf.setCreator('Loopwright print view (Chromium)')
  pdf.setProducer('Loopwright')
  const at = options.issue ? new Date(options.issue.issuedAt) : new Date()
  pdf.setCreationDate(at)
  pdf.setModificationDate(at)
  const bytes = Buffer.from(await pdf.save({ objectsPerTick: fullSpeed }))
  const { marks } = printed
  return {
    bytes,
    sha256: sha256Hex(bytes),
    pages: pdf.getPageCount(),
    fileName: sheetPdfFileName(detail.number, revision),
    blockedRequests: printed.blockedRequests,
    timings: { data: preparedAt - startedAt, queue: marks.tab - preparedAt, ready: marks.ready - marks.tab, print: marks.printed - marks.ready, finish: performance.now() - marks.printed },
  }
}

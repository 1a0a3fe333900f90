// PDFs of sheets and packages, printed by Debian's Chromium through puppeteer-core from the print view
// (/sheets/[id]/print). One browser is kept warm and shared by every render, relaunched when it dies; at most
// MAX_PAGES renders hold a tab at once, the rest wait their turn. The page is opened on loopback with a render
// token (server/utils/render-token.ts), not a person's session, and every request it makes outside this app's own
// origin is aborted, so a render never reaches the internet and never waits on it.
import { sha256Hex } from '../utils/content-hash'
import { mkdtemp, rm } from 'node:fs/promises'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import puppeteer, { type Browser } from 'puppeteer-core'
import { PDFDocument } from 'pdf-lib'
import { useDb } from '../utils/db'
import { makeRenderToken } from '../utils/render-token'
import { sheetPdfFileName, type PrintIssue } from '../../shared/schemas/print'
import { revisionDetail } from './sheets'

export interface RenderedPdf {
  bytes: Buffer
  sha256: string
  pages: number
  fileName: string
  /** Requests of the page that were refused for leaving the app (none expected: the page loads only its own files). */
  blockedRequests: string[]
}

export interface SheetRenderOptions {
  issue?: PrintIssue
}

/** A render that could not be made; `message` says why, for the person who asked. */
export class RenderError extends Error {}

const CHROMIUM = process.env.LOOPWRIGHT_CHROMIUM ?? '/usr/bin/chromium'
/** Tabs printing at once: two cores on the reference machine, and each tab's layout is single-threaded. */
const MAX_PAGES = Number(process.env.LOOPWRIGHT_PDF_PAGES ?? 2)
/** How many renders one caller may usefully start at once (a package's sheets): the tabs there are. */
export const renderTabs = MAX_PAGES
/** Longest wait for the print view to say it is ready (fonts in, formulas fitted). */
const READY_TIMEOUT_MS = 30_000

let browserStarting: Promise<{ browser: Browser; userDataDir: string }> | null = null

async function launch() {
  const userDataDir = await mkdtemp(join(tmpdir(), 'loopwright-pdf-'))
  const browser = await puppeteer.launch({
    executablePath: CHROMIUM,
    headless: true,
    userDataDir,
    args: [
      '--headless=new',
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
    ],
  })
  browser.on('disconnected', () => {
    // A browser that died (or was closed) is launched afresh by the next render.
    browserStarting = null
    void rm(userDataDir, { recursive: true, force: true })
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
  if (starting) await (await starting).browser.close().catch(() => {})
}

// A counting semaphore: at most MAX_PAGES tabs at once, first come first served.
let busy = 0
const waiting: (() => void)[] = []
async function withTab<T>(work: () => Promise<T>): Promise<T> {
  if (busy >= MAX_PAGES) await new Promise<void>((resolve) => waiting.push(resolve))
  else busy++
  try {
    return await work()
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

/** Prints `path` of this app to PDF bytes, blocking every request that is not to this app. */
export async function printPage(path: string): Promise<{ bytes: Uint8Array; blockedRequests: string[] }> {
  const origin = loopbackOrigin()
  return withTab(async () => {
    const browser = await warmBrowser()
    const context = await browser.createBrowserContext()
    const blockedRequests: string[] = []
    try {
      const page = await context.newPage()
      await page.setRequestInterception(true)
      page.on('request', (request) => {
        const url = request.url()
        if (url.startsWith(`${origin}/`) || url.startsWith('data:') || url.startsWith('blob:')) return void request.continue()
        blockedRequests.push(url)
        void request.abort('blockedbyclient')
      })
      await page.emulateMediaType('print')
      const response = await page.goto(`${origin}${path}`, { waitUntil: 'load', timeout: READY_TIMEOUT_MS })
      if (!response || !response.ok()) throw new RenderError(`The print view answered ${response?.status() ?? 'nothing'}`)
      await page.waitForSelector('.lw-print[data-print-ready="true"]', { timeout: READY_TIMEOUT_MS })
      const bytes = await page.pdf({ preferCSSPageSize: true, printBackground: true, timeout: READY_TIMEOUT_MS })
      return { bytes, blockedRequests }
    } finally {
      await context.close().catch(() => {})
    }
  })
}


/** One revision of a sheet as a PDF: the issued document when `options.issue` is given or the revision is issued, else a preview marked preliminary. */
export async function renderSheetPdf(revisionId: number, options: SheetRenderOptions = {}): Promise<RenderedPdf> {
  const detail = await revisionDetail(useDb(), revisionId)
  if (!detail) throw new RenderError(`There is no revision ${revisionId}`)
  const token = makeRenderToken(revisionId, options.issue ?? null)
  const printed = await printPage(`/sheets/${detail.id}/print?render=${encodeURIComponent(token)}`)
  const revision = options.issue ? { ...detail.revision, label: options.issue.label, status: 'issued' as const } : detail.revision
  const pdf = await PDFDocument.load(printed.bytes, { updateMetadata: false })
  const issued = revision.status === 'issued' || revision.status === 'superseded'
  pdf.setTitle(`${detail.number} ${detail.title}`, { showInWindowTitleBar: true })
  pdf.setAuthor(`${detail.firm.name}; prepared by ${revision.preparedBy.name}`)
  pdf.setSubject(
    issued
      ? `Design calculation ${detail.number}, revision ${revision.label}${options.issue ? `, issued ${options.issue.purpose}` : ''}, project ${detail.projectNumber} for ${detail.clientName}`
      : `Preliminary design calculation ${detail.number} (${revision.status}, not issued), project ${detail.projectNumber} for ${detail.clientName}`,
  )
  pdf.setKeywords([detail.projectNumber, detail.number, detail.loopTag, issued ? `revision ${revision.label}` : 'preliminary', 'control loop', 'design calculation'])
  pdf.setCreator('Loopwright print view (Chromium)')
  pdf.setProducer('Loopwright')
  const at = options.issue ? new Date(options.issue.issuedAt) : new Date()
  pdf.setCreationDate(at)
  pdf.setModificationDate(at)
  const bytes = Buffer.from(await pdf.save())
  return {
    bytes,
    sha256: sha256Hex(bytes),
    pages: pdf.getPageCount(),
    fileName: sheetPdfFileName(detail.number, revision),
    blockedRequests: printed.blockedRequests,
  }
}

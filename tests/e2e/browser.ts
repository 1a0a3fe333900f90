// Debian's Chromium, driven by puppeteer-core, for the browser tests. Every request the page
// makes is watched: one to a host other than loopback fails the test loudly, because the
// product must work with nothing loaded from the internet.
import { mkdtemp, mkdir, rm } from 'node:fs/promises'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { fileURLToPath } from 'node:url'
import puppeteer, { type Browser, type BrowserContext, type Page } from 'puppeteer-core'

export const screenshotDir = fileURLToPath(new URL('../.artifacts/screenshots/', import.meta.url))

const loopbackHosts = new Set(['127.0.0.1', 'localhost', '[::1]', '::1'])

export interface TestBrowser {
  browser: Browser
  /** Requests that tried to leave the machine; the tests assert it stays empty. */
  outsideRequests: string[]
  /** A page in a fresh browser context of its own (no cookies shared), or in `context` when given. */
  newPage(context?: BrowserContext): Promise<Page>
  close(): Promise<void>
}

export async function launchBrowser(): Promise<TestBrowser> {
  const userDataDir = await mkdtemp(join(tmpdir(), 'loopwright-chromium-'))
  const browser = await puppeteer.launch({
    executablePath: '/usr/bin/chromium',
    headless: true,
    userDataDir,
    args: [
      '--headless=new',
      '--no-sandbox',
      '--disable-gpu',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
      '--disable-quic',
      '--no-first-run',
      `--user-data-dir=${userDataDir}`,
    ],
    defaultViewport: { width: 1280, height: 900 },
  })
  const outsideRequests: string[] = []

  async function newPage(context?: BrowserContext) {
    const page = await (context ?? (await browser.createBrowserContext())).newPage()
    await page.setRequestInterception(true)
    page.on('request', (request) => {
      const url = request.url()
      const { protocol, hostname } = new URL(url)
      const local = protocol === 'data:' || protocol === 'blob:' || protocol === 'about:' || loopbackHosts.has(hostname)
      if (local) return void request.continue()
      outsideRequests.push(url)
      void request.abort('blockedbyclient')
    })
    return page
  }

  async function close() {
    await browser.close()
    await rm(userDataDir, { recursive: true, force: true })
    if (outsideRequests.length) {
      throw new Error(`The page tried to reach outside the machine:\n${outsideRequests.join('\n')}`)
    }
  }

  return { browser, outsideRequests, newPage, close }
}

export async function screenshot(page: Page, name: string) {
  await mkdir(screenshotDir, { recursive: true })
  await page.screenshot({ path: join(screenshotDir, `${name}.png`) as `${string}.png`, fullPage: true })
}

/** Signs in through the form, as a person would, and waits for the home page. */
export async function signIn(page: Page, baseUrl: string, email: string, password: string) {
  await page.goto(`${baseUrl}/sign-in`, { waitUntil: 'networkidle0' })
  await fillSignIn(page, email, password)
  await page.click('button[type=submit]')
  // The app moves to the home page in the browser (no full load), so wait for what it draws.
  await page.waitForSelector('[data-testid=person-name]')
  await page.waitForNetworkIdle({ idleTime: 200 })
}

export async function fillSignIn(page: Page, email: string, password: string) {
  await page.waitForSelector('#email')
  await clearAndType(page, '#email', email)
  await clearAndType(page, '#password', password)
}

export async function clearAndType(page: Page, selector: string, text: string) {
  await page.click(selector, { count: 3 })
  await page.keyboard.press('Backspace')
  if (text) await page.type(selector, text)
}

export async function textOf(page: Page, selector: string) {
  return page.$eval(selector, (element) => (element as HTMLElement).innerText.trim())
}

/**
 * TeX with the print view's line breaking taken out (app/utils/texBreak.ts: the aligned block, its row breaks,
 * alignment marks and quads, a bracketed sum opened to fixed brackets) and every space: what the engine's TeX and a
 * broken or written-out copy of it have in common, to find one inside the other.
 */
export function bareTex(tex: string) {
  return tex
    .replace(/\\(begin|end)\{aligned\}|\\\\|&|\\q?quad/g, '')
    .replace(/\\(left|biggl)\(/g, '(')
    .replace(/\\(right|biggr)\)/g, ')')
    .replace(/\s+/g, '')
}

/**
 * The TeX of every formula under `selector`, one after another: as KaTeX's MathML copies hold it on screen, or as the
 * print view names each formula (its aria-label: the print view typesets KaTeX's HTML alone, see CalcTex).
 */
export function typesetTexOf(page: Page, selector: string) {
  return page.$$eval(`${selector} annotation, ${selector} [data-tex][aria-label]`, (nodes) =>
    nodes.map((node) => (node.localName === 'annotation' ? node.textContent : node.getAttribute('aria-label')) ?? '').join(' '),
  )
}

// The Content-Security-Policy (nuxt.config.ts, `security`) in Chromium: the sign-in page and the workbench
// (KaTeX's inline styles, the SVG plots, the shipped fonts, Nuxt's hydration) work with no violation reported.
import type { Page } from 'puppeteer-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { demoPassword } from '../../scripts/demo-people'
import { baseUrl } from './api'
import { launchBrowser, signIn, type TestBrowser } from './browser'

let chromium: TestBrowser
beforeAll(async () => {
  chromium = await launchBrowser()
})
afterAll(async () => {
  await chromium?.close()
})

/** A page that records every `securitypolicyviolation` event and every console message about the policy. */
async function watchedPage(): Promise<{ page: Page; violations: () => Promise<string[]>; console: string[] }> {
  const page = await chromium.newPage()
  const console: string[] = []
  page.on('console', (message) => {
    if (/content security policy/i.test(message.text())) console.push(message.text())
  })
  await page.evaluateOnNewDocument(() => {
    const seen: string[] = []
    ;(window as unknown as { cspViolations: string[] }).cspViolations = seen
    document.addEventListener('securitypolicyviolation', (event) => {
      seen.push(`${event.violatedDirective} blocked ${event.blockedURI || '(inline)'} at ${event.sourceFile}:${event.lineNumber}`)
    })
  })
  const violations = () => page.evaluate(() => (window as unknown as { cspViolations: string[] }).cspViolations)
  return { page, violations, console }
}

describe('content security policy', () => {
  it('reports no violation on the sign-in page, whose form still works', async () => {
    const { page, violations, console } = await watchedPage()
    const response = await page.goto(`${baseUrl()}/sign-in`, { waitUntil: 'networkidle0' })
    expect(response?.headers()['content-security-policy']).toMatch(/'nonce-/)
    // Hydrated: the form answers a wrong password in place, which only the client-side script does.
    await page.type('#email', 'nobody@example.com')
    await page.type('#password', 'not-the-password')
    await page.click('button[type=submit]')
    await page.waitForSelector('[data-testid=sign-in-refusal][data-status="401"]')
    expect(await violations()).toEqual([])
    expect(console).toEqual([])
    await page.close()
  })

  it('reports no violation on the workbench: KaTeX typeset, plots drawn, fonts loaded', async () => {
    const { page, violations, console } = await watchedPage()
    await signIn(page, baseUrl(), 'tomas.okafor@example.com', demoPassword)
    await page.goto(`${baseUrl()}/workbench`, { waitUntil: 'networkidle0' })
    await page.waitForSelector('[data-testid=result][data-stale=false]')
    expect(await page.$('[data-testid=closed-loop-symbolic] .katex')).not.toBeNull()
    // KaTeX positions glyphs with style attributes: they took effect (a blocked attribute stays in the markup
    // but leaves the element's style empty).
    const styled = await page.$$eval('[data-testid=closed-loop-symbolic] .katex-html [style]', (nodes) =>
      nodes.map((node) => ({ written: node.getAttribute('style') ?? '', applied: (node as HTMLElement).style.cssText })),
    )
    expect(styled.length).toBeGreaterThan(0)
    for (const { written, applied } of styled) expect(applied, written).not.toBe('')
    expect(await page.$eval('[data-testid=step-plot] svg path[data-curve=step]', (path) => path.getAttribute('d') ?? '')).toMatch(/^M/)
    await page.evaluate(() => document.fonts.ready)
    expect(await page.evaluate(() => document.fonts.check('16px "Noto Sans"'))).toBe(true)
    expect(await page.evaluate(() => [...document.fonts].some((font) => font.family.includes('KaTeX') && font.status === 'loaded'))).toBe(true)
    expect(await violations()).toEqual([])
    expect(console).toEqual([])
    await page.close()
  })
})

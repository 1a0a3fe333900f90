// A client contact opening an administrator's page is refused on screen, and the server refuses the page's data.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { demoPassword, demoPeople } from '../../scripts/demo-people'
import { api, apiSignIn, baseUrl } from './api'
import { launchBrowser, screenshot, signIn, textOf, type TestBrowser } from './browser'

const client = demoPeople.find((person) => person.roles.includes('client' as never) && person.roles.length === 1)!
const admin = demoPeople.find((person) => person.roles.includes('admin' as never))!

let chromium: TestBrowser
beforeAll(async () => {
  chromium = await launchBrowser()
})
afterAll(async () => {
  await chromium?.close()
})

describe('refusal of pages a role may not open', () => {
  it('shows the client the refusal page for /people, loaded directly and reached by navigation', async () => {
    const page = await chromium.newPage()
    await signIn(page, baseUrl(), client.email, demoPassword)

    // The header offers the client no administration link.
    const links = await page.$$eval('nav[aria-label=Main] a', (found) => found.map((link) => link.getAttribute('href')))
    expect(links).not.toContain('/people')

    const response = await page.goto(`${baseUrl()}/people`, { waitUntil: 'networkidle0' })
    expect(response?.status()).toBe(403)
    await page.waitForSelector('[data-refusal=true]')
    expect(await textOf(page, 'h1')).toBe('This page is not open to your roles')
    // No list of people reached the page.
    expect(await page.$('[data-testid=invite-form]')).toBeNull()
    expect(await page.evaluate(() => document.body.innerText)).not.toContain('imogen.varga@example.com')
    await screenshot(page, 'refused-people-as-client')

    // The same refusal when the app navigates there in the browser, without a full load.
    await page.goto(`${baseUrl()}/`, { waitUntil: 'networkidle0' })
    await page.evaluate(() => {
      const root = document.querySelector('#__nuxt') as unknown as {
        __vue_app__: { config: { globalProperties: { $router: { push: (path: string) => Promise<unknown> } } } }
      }
      // The push itself is rejected by the middleware's refusal; what matters is what the page then shows.
      void root.__vue_app__.config.globalProperties.$router.push('/people').catch(() => undefined)
    })
    await page.waitForSelector('[data-refusal=true]')
    expect(await textOf(page, 'h1')).toBe('This page is not open to your roles')
    await page.close()
  })

  it('answers the client 403 on the people route itself, and writes the refusal to the audit trail', async () => {
    const clientCookie = await apiSignIn(client.email, demoPassword)
    const refused = await api(clientCookie, '/api/people')
    expect(refused.status).toBe(403)

    const adminCookie = await apiSignIn(admin.email, demoPassword)
    const trail = await api<{ items: Array<{ actorEmail: string | null; status: number | null; path: string | null }> }>(
      adminCookie,
      `/api/audit?sort=at&dir=desc&pageSize=50`,
    )
    expect(trail.status).toBe(200)
    expect(trail.body.items.some((row) => row.actorEmail === client.email && row.status === 403 && row.path?.startsWith('/api/people'))).toBe(true)
  })

  it('writes the refused page itself to the audit trail, once per refusal', async () => {
    const adminCookie = await apiSignIn(admin.email, demoPassword)
    type Trail = { items: Array<{ actorEmail: string | null; action: string; status: number | null; detail: { page?: string } }> }
    const refusalsOfAudit = async () => {
      const trail = await api<Trail>(adminCookie, `/api/audit?sort=at&dir=desc&pageSize=100`)
      expect(trail.status).toBe(200)
      return trail.body.items.filter((row) => row.actorEmail === client.email && row.action === 'page.refused' && row.status === 403 && row.detail.page === '/audit').length
    }
    const before = await refusalsOfAudit()

    const page = await chromium.newPage()
    await signIn(page, baseUrl(), client.email, demoPassword)
    const response = await page.goto(`${baseUrl()}/audit`, { waitUntil: 'networkidle0' })
    expect(response?.status()).toBe(403)
    await page.waitForSelector('[data-refusal=true]')
    await page.close()

    // The server's render, its internal render of the refusal page and the browser's hydration make one entry.
    expect(await refusalsOfAudit()).toBe(before + 1)
  })
})

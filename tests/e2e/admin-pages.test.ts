// The administrator's pages against the seeded demo (product.md's invented scenario):
// what each shows, server-side sort and filter through the URL, and the forms' field errors.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Page } from 'puppeteer-core'
import { demoPassword, demoPeople } from '../../scripts/demo-people'
import { baseUrl } from './api'
import { clearAndType, launchBrowser, screenshot, signIn, textOf, type TestBrowser } from './browser'

const admin = demoPeople.find((person) => person.roles.includes('admin' as never))!

let chromium: TestBrowser
let page: Page
beforeAll(async () => {
  chromium = await launchBrowser()
  page = await chromium.newPage()
  await signIn(page, baseUrl(), admin.email, demoPassword)
})
afterAll(async () => {
  await chromium?.close()
})

const firstCells = (column: number) =>
  page.$$eval(`tbody tr[data-row] td:nth-child(${column})`, (cells) => cells.map((cell) => (cell as HTMLElement).innerText.trim()))

describe('administration pages', () => {
  it('lists the people, sorts them on the server and filters by role', async () => {
    await page.goto(`${baseUrl()}/people`, { waitUntil: 'networkidle0' })
    const names = (await firstCells(1)).map((cell) => cell.replace(/\s*\(you\)$/, ''))
    for (const person of demoPeople) expect(names).toContain(person.name)
    expect(names).toEqual([...names].sort((a, b) => a.localeCompare(b)))
    await screenshot(page, 'people')

    // Sorted by name ascending already, so the first click on the heading turns it round.
    await Promise.all([page.waitForResponse((response) => response.url().includes('/api/people?')), page.click('button[data-sort=name]')])
    await page.waitForFunction(() => new URL(location.href).searchParams.get('dir') === 'desc')
    await page.waitForNetworkIdle({ idleTime: 200 })
    const descending = (await firstCells(1)).map((cell) => cell.replace(/\s*\(you\)$/, ''))
    expect(descending).toEqual([...names].reverse())
    expect(await page.$eval('th[aria-sort=descending]', (th) => (th as HTMLElement).innerText)).toContain('Name')

    await page.select('#people-role', 'checker')
    await page.waitForFunction(() => new URL(location.href).searchParams.get('role') === 'checker')
    await page.waitForNetworkIdle({ idleTime: 200 })
    const checkers = demoPeople.filter((person) => person.roles.includes('checker' as never)).map((person) => person.name)
    expect((await firstCells(1)).sort()).toEqual(checkers.sort())
  })

  it('shows the client organisation and the demo project with its members', async () => {
    await page.goto(`${baseUrl()}/organisations`, { waitUntil: 'networkidle0' })
    expect(await firstCells(1)).toContain('Northmere Water District')
    await screenshot(page, 'organisations')

    await page.goto(`${baseUrl()}/projects`, { waitUntil: 'networkidle0' })
    expect(await firstCells(1)).toContain('NWD-214')
    await screenshot(page, 'projects')

    await page.click('tbody a[href^="/projects/"]')
    await page.waitForSelector('[data-member]')
    expect(await textOf(page, 'h1')).toBe('Hollins Booster Station upgrade')
    const members = await page.$$eval('[data-member]', (items) => items.map((item) => (item as HTMLElement).innerText))
    for (const person of demoPeople.filter((p) => p.projectRole)) {
      expect(members.some((text) => text.includes(person.name))).toBe(true)
    }
    await screenshot(page, 'project-nwd-214')
  })

  it('shows the audit trail newest first, with the sign-ins just made', async () => {
    await page.goto(`${baseUrl()}/audit`, { waitUntil: 'networkidle0' })
    const actions = await firstCells(3)
    expect(actions.some((text) => text.includes('sign-in.succeeded'))).toBe(true)
    await screenshot(page, 'audit')
  })

  it('loads the firm settings and shows a field error for an empty firm name', async () => {
    await page.goto(`${baseUrl()}/firm`, { waitUntil: 'networkidle0' })
    expect(await page.$eval('#firm-name', (input) => (input as HTMLInputElement).value)).toBe('Cobalt Ridge Engineering')
    const cautions = await page.$$('textarea[id^=caution-]')
    expect(cautions.length).toBeGreaterThan(0)
    await screenshot(page, 'firm')
    await clearAndType(page, '#firm-name', '')
    await page.click('[data-testid=firm-form] button[type=submit]')
    await page.waitForSelector('[data-error-for=firm-name]')
    expect(await textOf(page, '[data-error-for=firm-name]')).toBe('A name has at least 2 characters')
  })
})

describe('changing a person', () => {
  it('changes roles, deactivates and reactivates, as the API then reports', async () => {
    const { api, apiSignIn } = await import('./api')
    const cookie = await apiSignIn(admin.email, demoPassword)
    const email = `linnea.farrow.${Date.now()}@example.com`
    const invited = await api<{ id: number }>(cookie, '/api/people/invite', {
      method: 'POST',
      body: { name: 'Linnea Farrow', email, roles: ['engineer'] },
    })
    expect(invited.status).toBe(201)
    const read = async () =>
      (await api<{ items: Array<{ roles: string[]; status: string }> }>(cookie, `/api/people?q=${encodeURIComponent(email)}`)).body.items[0]!

    await page.goto(`${baseUrl()}/people?q=${encodeURIComponent(email)}`, { waitUntil: 'networkidle0' })
    const row = `tr[data-row="${invited.body.id}"]`
    await page.waitForSelector(row)
    await page.click(`${row} button[aria-expanded]`)
    await page.waitForSelector(`[data-roles-editor="${invited.body.id}"]`)
    await screenshot(page, 'people-roles-editor')

    // No role at all is refused by personUpdateSchema before anything is sent.
    await page.click(`[data-roles-editor="${invited.body.id}"] input[value=engineer]`)
    await page.click(`[data-roles-editor="${invited.body.id}"] button[type=submit]`)
    await page.waitForSelector(`[data-error-for="roles-${invited.body.id}"]`)
    expect(await textOf(page, `[data-error-for="roles-${invited.body.id}"]`)).toBe('Choose at least one role')
    expect((await read()).roles).toEqual(['engineer'])

    await page.click(`[data-roles-editor="${invited.body.id}"] input[value=engineer]`)
    await page.click(`[data-roles-editor="${invited.body.id}"] input[value=checker]`)
    await Promise.all([
      page.waitForResponse((response) => response.request().method() === 'PATCH'),
      page.click(`[data-roles-editor="${invited.body.id}"] button[type=submit]`),
    ])
    await page.waitForSelector('[data-testid=people-notice][data-notice=sound]')
    expect([...(await read()).roles].sort()).toEqual(['checker', 'engineer'])

    await page.click(`${row} .lw-button-risk`)
    await Promise.all([
      page.waitForResponse((response) => response.request().method() === 'PATCH'),
      page.click(`[data-confirm-deactivate="${invited.body.id}"]`),
    ])
    await page.waitForSelector(`${row} [data-status=deactivated]`)
    expect((await read()).status).toBe('deactivated')
    await screenshot(page, 'people-deactivated')

    await Promise.all([
      page.waitForResponse((response) => response.request().method() === 'PATCH'),
      page.$$eval(`${row} button`, (buttons) => (buttons.find((b) => b.textContent?.includes('Reactivate')) as HTMLButtonElement).click()),
    ])
    await page.waitForFunction((selector) => !document.querySelector(`${selector} [data-status=deactivated]`), {}, row)
    // An invited person who has not chosen a password yet goes back to "invited", not "active".
    expect((await read()).status).toBe('invited')
  })

  it('signs a person out everywhere from the people page: their cookie opens nothing afterwards', async () => {
    const { api, apiSignIn } = await import('./api')
    const checker = demoPeople.find((person) => person.roles.includes('checker' as never) && !person.roles.includes('engineer' as never))!
    const checkerCookie = await apiSignIn(checker.email, demoPassword)
    expect((await api(checkerCookie, '/api/projects')).status).toBe(200)
    const adminCookie = await apiSignIn(admin.email, demoPassword)
    const listed = await api<{ items: Array<{ id: number }> }>(adminCookie, `/api/people?q=${encodeURIComponent(checker.email)}`)
    const id = listed.body.items[0]!.id

    await page.goto(`${baseUrl()}/people?q=${encodeURIComponent(checker.email)}`, { waitUntil: 'networkidle0' })
    await Promise.all([
      page.waitForResponse((response) => response.url().endsWith(`/api/people/${id}/sessions/revoke`)),
      page.click(`[data-sign-out-everywhere="${id}"]`),
    ])
    await page.waitForSelector('[data-testid=people-notice][data-notice=sound]')
    expect(await textOf(page, '[data-testid=people-notice]')).toContain(`of ${checker.name} ended`)
    await screenshot(page, 'people-signed-out-everywhere')
    expect((await api(checkerCookie, '/api/projects')).status).toBe(401)
  })
})

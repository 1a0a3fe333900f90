// The administrator's invitation form and the invited person's password page: bad input is shown
// next to its fields and creates nothing; good input creates the person, who can then sign in.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { demoPassword, demoPeople } from '../../scripts/demo-people'
import type { Page as ListPage } from '../../shared/schemas/lists'
import type { PersonRow } from '../../shared/schemas/people'
import { api, apiSignIn, baseUrl, invitationLink } from './api'
import { clearAndType, launchBrowser, screenshot, signIn, textOf, type TestBrowser } from './browser'

const admin = demoPeople.find((person) => person.roles.includes('admin' as never))!
const stamp = Date.now()
const newcomer = { name: 'Ottilie Brandvold', email: `ottilie.brandvold.${stamp}@example.com`, password: 'clearwell-at-four-metres' }

let chromium: TestBrowser
let adminCookie: string
const peopleTotal = async () => (await api<ListPage<PersonRow>>(adminCookie, '/api/people?pageSize=1')).body.total

beforeAll(async () => {
  chromium = await launchBrowser()
  adminCookie = await apiSignIn(admin.email, demoPassword)
})
afterAll(async () => {
  await chromium?.close()
})

describe('invitations', () => {
  it('shows each field error of a bad invitation form and adds no one', async () => {
    const before = await peopleTotal()
    const page = await chromium.newPage()
    let inviteCalls = 0
    page.on('request', (request) => {
      if (request.url().includes('/api/people/invite')) inviteCalls++
    })
    await signIn(page, baseUrl(), admin.email, demoPassword)
    await page.goto(`${baseUrl()}/people`, { waitUntil: 'networkidle0' })
    await page.click('[data-opens=invite-panel]')
    await page.waitForSelector('[data-testid=invite-form]')

    await clearAndType(page, '#invite-name', 'O')
    await clearAndType(page, '#invite-email', 'ottilie at example')
    await page.click('[data-testid=invite-form] button[type=submit]')
    await page.waitForSelector('[data-error-for=invite-roles]')
    // The messages are inviteSchema's own, shown beside their fields.
    expect(await textOf(page, '[data-error-for=invite-name]')).toBe('A name has at least 2 characters')
    expect(await textOf(page, '[data-error-for=invite-email]')).toBe('Enter a valid e-mail address')
    expect(await textOf(page, '[data-error-for=invite-roles]')).toBe('Choose at least one role')
    await screenshot(page, 'people-invite-errors')

    // A client without an organisation is refused by the schema's cross-field rule.
    await clearAndType(page, '#invite-name', newcomer.name)
    await clearAndType(page, '#invite-email', newcomer.email)
    await page.click('input[name=invite-role-client]')
    await page.waitForSelector('#invite-organisation')
    await page.click('[data-testid=invite-form] button[type=submit]')
    await page.waitForSelector('[data-error-for=invite-organisation]')
    expect(await textOf(page, '[data-error-for=invite-organisation]')).toBe('A client contact belongs to a client organisation')

    expect(inviteCalls).toBe(0)
    expect(await peopleTotal()).toBe(before)
    const listed = await api<ListPage<PersonRow>>(adminCookie, `/api/people?q=${encodeURIComponent(newcomer.email)}`)
    expect(listed.body.items).toEqual([])
    await page.close()
  })

  it('invites a person, whose bad password form shows its errors, and whose good one lets them sign in', async () => {
    const before = await peopleTotal()
    const page = await chromium.newPage()
    await signIn(page, baseUrl(), admin.email, demoPassword)
    await page.goto(`${baseUrl()}/people`, { waitUntil: 'networkidle0' })
    await page.click('[data-opens=invite-panel]')
    await page.waitForSelector('[data-testid=invite-form]')
    await clearAndType(page, '#invite-name', newcomer.name)
    await clearAndType(page, '#invite-email', newcomer.email)
    await page.click('input[name=invite-role-engineer]')
    await Promise.all([
      page.waitForResponse((response) => response.url().includes('/api/people/invite')),
      page.click('[data-testid=invite-form] button[type=submit]'),
    ])
    await page.waitForSelector('[data-testid=invite-outcome][data-notice=sound]')
    expect(await peopleTotal()).toBe(before + 1)
    const [row] = (await api<ListPage<PersonRow>>(adminCookie, `/api/people?q=${encodeURIComponent(newcomer.email)}`)).body.items
    expect(row).toMatchObject({ name: newcomer.name, email: newcomer.email, roles: ['engineer'], status: 'invited' })
    await page.waitForFunction((email) => document.body.innerText.includes(email), {}, newcomer.email)
    await screenshot(page, 'people-after-invite')

    // The invited person opens the e-mailed link (in a browser context of their own: no admin session).
    const link = new URL(await invitationLink(newcomer.email))
    const invitee = await chromium.newPage()
    await invitee.goto(`${baseUrl()}${link.pathname}`, { waitUntil: 'networkidle0' })
    await invitee.waitForSelector('[data-testid=invitation-form]')
    expect(await textOf(invitee, 'h1')).toBe(`Welcome, ${newcomer.name}`)

    await clearAndType(invitee, '#new-password', 'short')
    await clearAndType(invitee, '#confirm-password', 'different')
    await invitee.click('[data-testid=invitation-form] button[type=submit]')
    await invitee.waitForSelector('[data-error-for=new-password]')
    expect(await textOf(invitee, '[data-error-for=new-password]')).toBe('A password has at least 10 characters')
    await clearAndType(invitee, '#new-password', newcomer.password)
    await invitee.click('[data-testid=invitation-form] button[type=submit]')
    await invitee.waitForSelector('[data-error-for=confirm-password]')
    expect(await textOf(invitee, '[data-error-for=confirm-password]')).toBe('The two passwords differ')
    await screenshot(invitee, 'invitation-errors')
    // Nothing was set: the person still cannot sign in.
    const early = await fetch(`${baseUrl()}/api/auth/login`, {
      method: 'POST',
      headers: { 'content-type': 'application/json' },
      body: JSON.stringify({ email: newcomer.email, password: newcomer.password }),
    })
    expect(early.status).toBe(401)

    await clearAndType(invitee, '#confirm-password', newcomer.password)
    await invitee.click('[data-testid=invitation-form] button[type=submit]')
    await invitee.waitForSelector('[data-testid=invitation-done]')
    await screenshot(invitee, 'invitation-done')

    // The link works once.
    await invitee.goto(`${baseUrl()}${link.pathname}`, { waitUntil: 'networkidle0' })
    await invitee.waitForSelector('[data-testid=invitation-refusal]')

    await signIn(invitee, baseUrl(), newcomer.email, newcomer.password)
    expect(await textOf(invitee, '[data-testid=person-name]')).toBe(newcomer.name)
    expect(await invitee.$$eval('[data-role-panel]', (panels) => panels.map((panel) => panel.getAttribute('data-role-panel')))).toEqual(['engineer'])
    await invitee.close()
    await page.close()
  })
})

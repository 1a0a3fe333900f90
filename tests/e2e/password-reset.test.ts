// "Forgot your password?" on the sign-in page: the e-mailed link (read from the test sink) opens the page that
// sets a new password, which then signs in; the link works once.
import { afterAll, beforeAll, expect, it } from 'vitest'
import { demoPassword, demoPeople } from '../../scripts/demo-people'
import { api, apiSignIn, baseUrl, invitationLink, mailApiUrl } from './api'
import { clearAndType, launchBrowser, screenshot, signIn, textOf, type TestBrowser } from './browser'

const admin = demoPeople.find((person) => person.roles.includes('admin' as never))!
const person = { name: 'Wendell Ashgrove', email: `wendell.ashgrove.${Date.now()}@example.com`, password: 'booster-station-night-shift' }
let chromium: TestBrowser

beforeAll(async () => {
  chromium = await launchBrowser()
  const cookie = await apiSignIn(admin.email, demoPassword)
  expect((await api(cookie, '/api/people/invite', { method: 'POST', body: { name: person.name, email: person.email, roles: ['engineer'] } })).status).toBe(201)
  const token = new URL(await invitationLink(person.email)).pathname.split('/').pop()!
  const accepted = await fetch(`${baseUrl()}/api/invitations/${token}`, {
    method: 'POST',
    headers: { 'content-type': 'application/json' },
    body: JSON.stringify({ password: person.password, confirm: person.password }),
  })
  expect(accepted.status).toBe(204)
})
afterAll(async () => {
  await chromium?.close()
})

async function resetLink(email: string): Promise<string> {
  // The outbox worker sends it; other test files queue hundreds of mails meanwhile, so allow up to a minute.
  for (let attempt = 0; attempt < 600; attempt++) {
    const messages = (await (await fetch(`${mailApiUrl()}/messages?to=${encodeURIComponent(email)}`)).json()) as { subject: string; text: string }[]
    const reset = messages.find((message) => message.subject === 'Reset your Loopwright password')
    if (reset) return reset.text.match(/https?:\/\/\S+\/reset-password\/[A-Za-z0-9_-]+/)![0]
    await new Promise((resolve) => setTimeout(resolve, 100))
  }
  throw new Error(`no reset mail reached ${email}`)
}

it('resets a forgotten password through the e-mailed link', async () => {
  const page = await chromium.newPage()
  await page.goto(`${baseUrl()}/sign-in`, { waitUntil: 'networkidle0' })
  // The link is there; it is followed as a visitor's browser would load it (a click before hydration is a full load
  // anyway, and on a loaded machine the two raced). The sign-in page has an #email field too: wait for this page.
  const href = await page.$eval('[data-testid=forgot-password]', (link) => link.getAttribute('href'))
  expect(href).toBe('/forgot-password')
  await page.goto(`${baseUrl()}${href}`, { waitUntil: 'networkidle0' })
  await page.waitForFunction(() => document.querySelector('h1')?.textContent?.trim() === 'Forgot your password?')
  await clearAndType(page, '#email', person.email)
  await page.click('form button[type=submit]')
  await page.waitForSelector('[data-testid=reset-requested]')
  await screenshot(page, 'password-reset-requested')

  const link = new URL(await resetLink(person.email))
  await page.goto(`${baseUrl()}${link.pathname}`, { waitUntil: 'networkidle0' })
  await page.waitForSelector('[data-testid=reset-form]')
  expect(await textOf(page, 'h1')).toBe('Choose a new password')
  const fresh = 'a clearwell that never overflows'
  await clearAndType(page, '#new-password', fresh)
  await clearAndType(page, '#confirm-password', fresh)
  await page.click('[data-testid=reset-form] button[type=submit]')
  await page.waitForSelector('[data-testid=reset-done]')
  await screenshot(page, 'password-reset-done')

  await page.goto(`${baseUrl()}${link.pathname}`, { waitUntil: 'networkidle0' })
  await page.waitForSelector('[data-testid=reset-refusal]')
  await page.close()
  // Signed in from a tab of its own. Seen here: after the pages above, puppeteer's count of requests in flight in
  // that tab stayed above zero with none open, so waiting for the network to go quiet there timed out now and then.
  const signedIn = await chromium.newPage()
  await signIn(signedIn, baseUrl(), person.email, fresh)
  expect(new URL(signedIn.url()).pathname).toBe('/')
  await signedIn.close()
})

// Each demo person of product.md's scenario signs in through the form and sees the home page of their roles.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { demoPassword, demoPeople } from '../../scripts/demo-people'
import { roles } from '../../shared/schemas/roles'
import { baseUrl } from './api'
import { launchBrowser, screenshot, signIn, textOf, type TestBrowser } from './browser'

let chromium: TestBrowser
beforeAll(async () => {
  chromium = await launchBrowser()
})
afterAll(async () => {
  await chromium?.close()
})

describe('home page per role', () => {
  it('sends a signed-out visitor to the sign-in page', async () => {
    const page = await chromium.newPage()
    await page.goto(`${baseUrl()}/people`, { waitUntil: 'networkidle0' })
    expect(new URL(page.url()).pathname).toBe('/sign-in')
    expect(await page.$('#email')).not.toBeNull()
    // The interface face is the one shipped in the build, loaded from this app (browser.ts refuses any other host).
    const loaded = await page.evaluate(async () => {
      await document.fonts.ready
      return [...document.fonts].filter((face) => face.status === 'loaded').map((face) => face.family.replace(/"/g, ''))
    })
    expect(loaded).toContain('Noto Sans')
    expect(loaded).toContain('Noto Serif')
    expect(await page.$eval('body', (body) => getComputedStyle(body).fontFamily)).toMatch(/^"?Noto Sans"?/)
    await screenshot(page, 'sign-in')
    await page.close()
  })

  for (const person of demoPeople) {
    it(`${person.name} (${person.roles.join(' + ')}) sees a panel for each role held and none other`, async () => {
      const page = await chromium.newPage()
      await signIn(page, baseUrl(), person.email, demoPassword)
      expect(new URL(page.url()).pathname).toBe('/')
      expect(await textOf(page, '[data-testid=person-name]')).toBe(person.name)
      const panels = await page.$$eval('[data-role-panel]', (found) => found.map((panel) => panel.getAttribute('data-role-panel')))
      expect(panels.sort()).toEqual([...person.roles].sort())
      for (const role of roles) {
        expect(panels.includes(role)).toBe((person.roles as readonly string[]).includes(role))
      }
      // Every signed-in page carries the caution of product.md.
      expect(await textOf(page, '[data-testid=caution]')).toContain('never replaces, the judgement of the responsible licensed engineer')
      if (person.roles.some((role) => role !== 'admin')) {
        // Members of NWD-214 see it on their home page, from the projects route.
        await page.waitForFunction(() => document.body.innerText.includes('NWD-214'))
      } else {
        const tasks = await page.$$eval('[data-role-panel=admin] a', (links) => links.map((link) => link.getAttribute('href')))
        expect(tasks).toEqual(['/people', '/organisations', '/projects', '/audit', '/firm'])
      }
      await screenshot(page, `home-${person.email.split('@')[0]}`)

      await page.click('[data-testid=sign-out]')
      await page.waitForSelector('#email')
      expect(new URL(page.url()).pathname).toBe('/sign-in')
      await page.goto(`${baseUrl()}/`, { waitUntil: 'networkidle0' })
      expect(new URL(page.url()).pathname).toBe('/sign-in')
      await page.close()
    })
  }
})

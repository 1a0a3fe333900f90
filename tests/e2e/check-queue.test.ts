// The home pages' queues (issue 8, item 10): the checker's lists revisions waiting for their check, the longest waiting
// since submission first, and never one they edited; the engineer's shows sheets returned to them first. Statuses,
// times and editors are set in the database.
import postgres from 'postgres'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { demoPassword } from '../../scripts/demo-people'
import { api, apiSignIn, baseUrl } from './api'
import { launchBrowser, screenshot, signIn, type TestBrowser } from './browser'

let chromium: TestBrowser
const sql = postgres(inject('databaseUrl'), { max: 1, onnotice: () => {} })
const titles = ['Queue check: younger', 'Queue check: oldest', 'Queue check: edited by the checker']

beforeAll(async () => {
  chromium = await launchBrowser()
  const cookie = await apiSignIn('tomas.okafor@example.com', demoPassword)
  const [project] = await sql`select id from projects where number = 'NWD-214'`
  const [checker] = await sql`select id from people where email = 'henrik.salo@example.com'`
  const since = ['2002-02-01T08:00:00Z', '2002-01-01T08:00:00Z', '2002-01-15T08:00:00Z']
  for (const [i, title] of titles.entries()) {
    const created = await api<{ id: number }>(cookie, `/api/projects/${project!.id}/sheets`, { method: 'POST', body: { title, loopTag: `LIC-214-5${i}` } })
    expect(created.status).toBe(201)
    await sql`update sheet_revisions set status = 'in check', submitted_at = ${since[i]!} where sheet_id = ${created.body.id}`
    if (i === 2) {
      await sql`insert into revision_editors (revision_id, person_id)
        select id, ${checker!.id} from sheet_revisions where sheet_id = ${created.body.id}`
    }
  }
})
afterAll(async () => {
  await chromium?.close()
  await sql.end()
})

describe("the checker's home page", () => {
  it('shows the queue oldest first, leaving out what the checker edited', async () => {
    const page = await chromium.newPage()
    await signIn(page, baseUrl(), 'henrik.salo@example.com', demoPassword)
    await page.waitForSelector('[data-testid=check-queue] li')
    const rows = await page.$$eval('[data-testid=check-queue] li', (items) => items.map((item) => (item as HTMLElement).innerText))
    const ours = rows.filter((text) => titles.some((title) => text.includes(title)))
    expect(ours.map((text) => titles.find((title) => text.includes(title)))).toEqual([titles[1], titles[0]])
    expect(ours[0]).toContain('prepared by Tomás Okafor')
    await screenshot(page, 'home-check-queue')
    await page.close()
  })
})

describe("the engineer's home page", () => {
  it('shows sheets returned to them before their drafts, however long ago they were returned', async () => {
    const cookie = await apiSignIn('tomas.okafor@example.com', demoPassword)
    const [project] = await sql`select id from projects where number = 'NWD-214'`
    const make = async (title: string) => {
      const created = await api<{ id: number }>(cookie, `/api/projects/${project!.id}/sheets`, { method: 'POST', body: { title, loopTag: 'LIC-214-58' } })
      expect(created.status).toBe(201)
      return created.body.id
    }
    const returned = await make('Home: returned long ago')
    await sql`update sheet_revisions set status = 'returned', edited_at = '2002-01-01T08:00:00Z' where sheet_id = ${returned}`
    const fresh = await make('Home: fresh draft')
    const page = await chromium.newPage()
    await signIn(page, baseUrl(), 'tomas.okafor@example.com', demoPassword)
    await page.waitForSelector('[data-testid=my-sheets] li')
    const rows = await page.$$eval('[data-testid=my-sheets] li', (items) =>
      items.map((item) => ({ id: Number(item.getAttribute('data-my-sheet')), status: item.querySelector('[data-sheet-status]')?.getAttribute('data-sheet-status') })),
    )
    const statuses = rows.map((row) => row.status)
    expect(statuses.lastIndexOf('returned')).toBeLessThan(statuses.indexOf('draft'))
    const ids = rows.map((row) => row.id)
    expect(ids).toContain(returned)
    expect(ids.indexOf(returned)).toBeLessThan(ids.indexOf(fresh))
    expect(ids[statuses.indexOf('draft')]).toBe(fresh)
    await screenshot(page, 'home-engineer-returned-first')
    await page.close()
  })
})

// The checker's home page lists revisions waiting for their check, the longest waiting first, and says which are not
// theirs to check (issue 8, item 10). Statuses and times are set in the database, as the workflow will set them.
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
    await sql`update sheet_revisions set status = 'in check', edited_at = ${since[i]!} where sheet_id = ${created.body.id}`
    if (i === 2) await sql`update sheet_revisions set edited_by = ${checker!.id} where sheet_id = ${created.body.id}`
  }
})
afterAll(async () => {
  await chromium?.close()
  await sql.end()
})

describe("the checker's home page", () => {
  it('shows the queue oldest first, each saying whether it is theirs to check', async () => {
    const page = await chromium.newPage()
    await signIn(page, baseUrl(), 'henrik.salo@example.com', demoPassword)
    await page.waitForSelector('[data-testid=check-queue] li')
    const rows = await page.$$eval('[data-testid=check-queue] li', (items) =>
      items.map((item) => ({ text: (item as HTMLElement).innerText, mayCheck: item.querySelector('[data-may-check]')?.getAttribute('data-may-check') })),
    )
    const ours = rows.filter((row) => titles.some((title) => row.text.includes(title)))
    expect(ours.map((row) => titles.find((title) => row.text.includes(title)))).toEqual([titles[1], titles[2], titles[0]])
    expect(ours.map((row) => row.mayCheck)).toEqual(['true', 'false', 'true'])
    expect(ours[1]!.text).toContain('Not yours: you edited this revision')
    await screenshot(page, 'home-check-queue')
    await page.close()
  })
})

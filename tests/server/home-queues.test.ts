// The home pages' queues (issue 8, item 10): the checker's revisions in check, oldest first, each saying whether they
// may check it (nobody checks what they prepared or edited); the engineer's own sheets, returned ones first.
// Statuses and times are set in the database, as the workflow (branch flow) will set them.
import { beforeAll, describe, expect, it } from 'vitest'
import { database, demo } from './support/client'
import { newSheet, setStatus, theCast, type Cast } from './support/sheets'

let cast: Cast
let checkerId: number
const made: Record<'newest' | 'oldest' | 'middle' | 'editedByChecker' | 'elsewhere' | 'draft', number> = {} as never

async function inCheckSince(sheetId: number, at: string) {
  await setStatus(sheetId, 'in check')
  await database()`update sheet_revisions set edited_at = ${at} where sheet_id = ${sheetId}`
}

beforeAll(async () => {
  cast = await theCast()
  const [checker] = await database()`select id from people where email = ${demo.checker}`
  checkerId = checker!.id
  for (const name of ['newest', 'oldest', 'middle', 'editedByChecker', 'draft'] as const) {
    made[name] = (await newSheet(cast.engineer, cast.demoProjectId, { title: `Queue ${name}`, loopTag: 'FIC-214-40' })).id
  }
  made.elsewhere = (await newSheet(cast.outsider, cast.otherProjectId, { title: 'Queue elsewhere', loopTag: 'FIC-888-40' })).id
  // Times far in the past, so the demo data and other tests' sheets in check come after these.
  await inCheckSince(made.newest, '2001-03-03T10:00:00Z')
  await inCheckSince(made.oldest, '2001-01-01T10:00:00Z')
  await inCheckSince(made.middle, '2001-02-02T10:00:00Z')
  await inCheckSince(made.editedByChecker, '2001-02-15T10:00:00Z')
  await database()`update sheet_revisions set edited_by = ${checkerId} where sheet_id = ${made.editedByChecker}`
  await inCheckSince(made.elsewhere, '2000-12-01T10:00:00Z')
})

describe("the checker's queue", () => {
  it('lists revisions in check in the checker’s projects, oldest first, saying which they may check', async () => {
    const answer = await cast.checker.get('/api/check-queue')
    expect(answer.status).toBe(200)
    const ours = answer.body.filter((row: { sheetId: number }) => Object.values(made).includes(row.sheetId))
    expect(ours.map((row: { title: string }) => row.title)).toEqual(['Queue oldest', 'Queue middle', 'Queue editedByChecker', 'Queue newest'])
    expect(ours.map((row: { mayCheck: boolean }) => row.mayCheck)).toEqual([true, true, false, true])
    expect(ours[2].reason).toBe('You edited this revision')
    expect(ours[0]).toMatchObject({ projectNumber: 'NWD-214', waitingSince: '2001-01-01T10:00:00.000Z', mayCheck: true, reason: null })
    // Whole queue in order: nothing waits longer than a row above it.
    const times = answer.body.map((row: { waitingSince: string }) => row.waitingSince)
    expect(times).toEqual([...times].sort())
  })

  it('holds no draft and nothing of a project where they are not a checker', async () => {
    const ids = (await cast.checker.get('/api/check-queue')).body.map((row: { sheetId: number }) => row.sheetId)
    expect(ids).not.toContain(made.draft)
    expect(ids).not.toContain(made.elsewhere)
    // The outside project has no checker: its engineer, who is none, has an empty queue.
    expect((await cast.outsider.get('/api/check-queue')).body).toEqual([])
  })

  it('is empty for people who are not checker members (engineer, client)', async () => {
    expect((await cast.engineer.get('/api/check-queue')).body).toEqual([])
    expect((await cast.client.get('/api/check-queue')).body).toEqual([])
    expect((await cast.signedOut.get('/api/check-queue')).status).toBe(401)
  })
})

describe("the engineer's own sheets", () => {
  it('come returned first, then drafts by latest change', async () => {
    const returned = (await newSheet(cast.engineer, cast.demoProjectId, { title: 'Returned long ago', loopTag: 'FIC-214-41' })).id
    await setStatus(returned, 'returned')
    await database()`update sheet_revisions set edited_at = '2001-01-01T00:00:00Z' where sheet_id = ${returned}`
    const fresh = (await newSheet(cast.engineer, cast.demoProjectId, { title: 'Fresh draft', loopTag: 'FIC-214-42' })).id
    const answer = await cast.engineer.get('/api/sheets?mine=drafts&sort=updatedAt&dir=desc&pageSize=100')
    expect(answer.status).toBe(200)
    const statuses = answer.body.items.map((row: { status: string }) => row.status)
    const firstDraft = statuses.indexOf('draft')
    expect(statuses.lastIndexOf('returned')).toBeLessThan(firstDraft)
    const ids = answer.body.items.map((row: { id: number }) => row.id)
    expect(ids.indexOf(returned)).toBeLessThan(ids.indexOf(fresh))
    expect(ids[firstDraft]).toBe(fresh)
  })
})

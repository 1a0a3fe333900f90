// The home pages' queues (issue 8, item 10): the checker's revisions in check, the longest waiting since submission
// first, never one the checker prepared or edited (product.md: the checker is independent; `revision_editors` names
// everyone who saved a revision); the engineer's own sheets, returned ones first.
import { beforeAll, describe, expect, it } from 'vitest'
import { Client, database, newPerson, signedIn } from './support/client'
import { newSheet, setStatus, theCast, type Cast } from './support/sheets'

let cast: Cast
/** An engineer and checker member of the demo project: prepares one sheet, edits others, and checks the rest. */
let both: Client
const made: Record<'submittedLast' | 'submittedFirst' | 'preparedByBoth' | 'editedByBoth' | 'editedEarlierByBoth' | 'elsewhere' | 'draft', number> = {} as never

async function save(who: Client, sheetId: number) {
  const { revision } = (await who.get(`/api/sheets/${sheetId}`)).body
  const saved = await who.patch(`/api/sheets/${sheetId}`, { version: revision.version, document: revision.document })
  expect(saved.status).toBe(200)
}

async function submit(sheetId: number) {
  const { revision } = (await cast.engineer.get(`/api/sheets/${sheetId}`)).body
  expect((await cast.engineer.post(`/api/sheets/${sheetId}/submit`, { version: revision.version })).status).toBe(200)
}

const queueOf = async (who: Client) => {
  const answer = await who.get('/api/check-queue')
  expect(answer.status).toBe(200)
  return answer.body as { sheetId: number; title: string; waitingSince: string; preparedByName: string; projectNumber: string }[]
}
const ours = (rows: { sheetId: number }[]) => rows.filter((row) => Object.values(made).includes(row.sheetId))
const titlesOf = (rows: { title: string }[]) => rows.map((row) => row.title)

beforeAll(async () => {
  cast = await theCast()
  const person = await newPerson(cast.admin, ['engineer', 'checker'], { name: 'Queue Both-Roles' })
  for (const role of ['engineer', 'checker']) {
    expect((await cast.admin.post(`/api/projects/${cast.demoProjectId}/members`, { personId: person.id, role })).status).toBe(201)
  }
  both = await signedIn(person.email, person.password)
  // Made in this order, so the last change and the submission order disagree: the queue follows the submission.
  made.submittedLast = (await newSheet(cast.engineer, cast.demoProjectId, { title: 'Queue submitted last', loopTag: 'FIC-214-40' })).id
  made.submittedFirst = (await newSheet(cast.engineer, cast.demoProjectId, { title: 'Queue submitted first', loopTag: 'FIC-214-40' })).id
  made.preparedByBoth = (await newSheet(both, cast.demoProjectId, { title: 'Queue prepared by both', loopTag: 'FIC-214-40' })).id
  made.editedByBoth = (await newSheet(cast.engineer, cast.demoProjectId, { title: 'Queue edited by both', loopTag: 'FIC-214-40' })).id
  await save(both, made.editedByBoth)
  // Edited by the checker, then by someone else: the last editor is another, yet the checker edited it.
  made.editedEarlierByBoth = (await newSheet(cast.engineer, cast.demoProjectId, { title: 'Queue edited earlier by both', loopTag: 'FIC-214-40' })).id
  await save(both, made.editedEarlierByBoth)
  await save(cast.engineer, made.editedEarlierByBoth)
  made.draft = (await newSheet(cast.engineer, cast.demoProjectId, { title: 'Queue draft', loopTag: 'FIC-214-40' })).id
  made.elsewhere = (await newSheet(cast.outsider, cast.otherProjectId, { title: 'Queue elsewhere', loopTag: 'FIC-888-40' })).id
  for (const name of ['submittedFirst', 'preparedByBoth', 'editedByBoth', 'editedEarlierByBoth', 'submittedLast'] as const) await submit(made[name])
  await setStatus(made.elsewhere, 'in check')
})

describe("the checker's queue", () => {
  it('lists the revisions in check in the checker’s projects, the first submitted first', async () => {
    const queue = ours(await queueOf(cast.checker))
    expect(titlesOf(queue)).toEqual(['Queue submitted first', 'Queue prepared by both', 'Queue edited by both', 'Queue edited earlier by both', 'Queue submitted last'])
    const [row] = await database()`select submitted_at from sheet_revisions where sheet_id = ${made.submittedFirst}`
    expect(queue[0]).toMatchObject({ projectNumber: 'NWD-214', preparedByName: 'Tomás Okafor', waitingSince: row!.submitted_at.toISOString() })
    // Whole queue in order: nothing waits longer than a row above it.
    const times = (await queueOf(cast.checker)).map((entry) => entry.waitingSince)
    expect(times).toEqual([...times].sort())
  })

  it('never holds a revision the checker prepared or edited, even when another edited it last', async () => {
    const [editors] = await database()`select array_agg(p.name order by p.name) as names from revision_editors e
      join people p on p.id = e.person_id join sheet_revisions r on r.id = e.revision_id where r.sheet_id = ${made.editedEarlierByBoth}`
    expect(editors!.names).toEqual(['Queue Both-Roles', 'Tomás Okafor'])
    expect(titlesOf(ours(await queueOf(both)))).toEqual(['Queue submitted first', 'Queue submitted last'])
  })

  it('holds no draft and nothing of a project where they are not a checker', async () => {
    const ids = (await queueOf(cast.checker)).map((row) => row.sheetId)
    expect(ids).not.toContain(made.draft)
    expect(ids).not.toContain(made.elsewhere)
    // The outside project has no checker: its engineer, who is none, has an empty queue.
    expect(await queueOf(cast.outsider)).toEqual([])
  })

  it('is empty for people who are not checker members (engineer, client)', async () => {
    expect(await queueOf(cast.engineer)).toEqual([])
    expect(await queueOf(cast.client)).toEqual([])
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

// Comments on a revision (issue 8, item 3): a checker writes on a revision in check, anchored to a section, a
// block, a parameter or a derivation step; the engineer answers; a checker resolves. Stale versions are refused,
// clients and outsiders never see a comment (403, audited), the preparer never checks their own work.
import { beforeAll, describe, expect, it } from 'vitest'
import { database } from './support/client'
import { lastAudit, newSheet, setStatus, theCast, type Cast } from './support/sheets'

let cast: Cast
let sheet: { id: number; revisionId: number; version: number }

beforeAll(async () => {
  cast = await theCast()
  const made = await newSheet(cast.engineer, cast.demoProjectId, { title: 'Booster discharge pressure, check copy', loopTag: 'PIC-214-01', template: 'pi-pressure-loop' })
  await setStatus(made.id, 'in check')
  sheet = { id: made.id, revisionId: made.detail.revision.id, version: made.detail.revision.version }
})

const comment = (anchorKind: string, anchor: string, body = 'Please cite the datasheet for this value.') => ({ version: sheet.version, anchorKind, anchor, body })

describe('writing comments', () => {
  it('a checker comments on a section, a block, a parameter and a derivation step; each reads as its anchor', async () => {
    const path = `/api/revisions/${sheet.revisionId}/comments`
    expect((await cast.checker.post(path, comment('section', 'scope'))).status).toBe(201)
    expect((await cast.checker.post(path, comment('block', 'P'))).status).toBe(201)
    expect((await cast.checker.post(path, comment('parameter', 'Kc'))).status).toBe(201)
    const stepped = await cast.checker.post(path, comment('step', '1'))
    expect(stepped.status).toBe(201)
    const labels = stepped.body.comments.map((c: { anchorLabel: string }) => c.anchorLabel)
    expect(labels[0]).toBe('Purpose and scope')
    expect(labels[1]).toMatch(/^Block P: /)
    expect(labels[2]).toMatch(/^Parameter Kc/)
    expect(labels[3]).toMatch(/^Derivation step 1: /)
    expect(stepped.body.open).toBe(4)
    expect(await lastAudit('comment.created', path)).toMatchObject({ status: null })
  })

  it('refuses an anchor the revision does not hold (400 naming anchor)', async () => {
    const path = `/api/revisions/${sheet.revisionId}/comments`
    for (const [kind, anchor] of [['block', 'Q'], ['parameter', 'nope'], ['step', '999'], ['section', 'appendix']]) {
      const answer = await cast.checker.post(path, comment(kind!, anchor!))
      expect(answer.status, `${kind} ${anchor}`).toBe(400)
      expect(answer.body.data.field).toBe('anchor')
    }
  })

  it('refuses a stale version with 409 and records the refusal', async () => {
    const path = `/api/revisions/${sheet.revisionId}/comments`
    const answer = await cast.checker.post(path, { ...comment('section', 'scope'), version: sheet.version + 5 })
    expect(answer.status).toBe(409)
    expect(answer.body.data.version).toBe(sheet.version)
    expect(await lastAudit('comment.create-refused', path)).toMatchObject({ status: 409 })
  })

  it('only a checker of the project comments, never the one who prepared or edited it', async () => {
    const path = `/api/revisions/${sheet.revisionId}/comments`
    for (const who of ['engineer', 'admin', 'client', 'outsider'] as const) {
      expect((await cast[who].post(path, comment('section', 'scope'))).status, who).toBe(403)
    }
    // Priya holds both roles; as the sheet's last editor she may not check it.
    const [priya] = await database()`select id from people where email = 'priya.raman@example.com'`
    const [project] = await database()`select 1 from project_members where project_id = ${cast.demoProjectId} and person_id = ${priya!.id} and role = 'checker'`
    if (!project) await database()`insert into project_members (project_id, person_id, role) values (${cast.demoProjectId}, ${priya!.id}, 'checker')`
    await database()`update sheet_revisions set edited_by = ${priya!.id} where id = ${sheet.revisionId}`
    const own = await cast.secondEngineer.post(path, comment('section', 'scope'))
    expect(own.status).toBe(403)
    const listed = await cast.secondEngineer.get(path)
    expect(listed.body.canComment).toBe(false)
    expect(listed.body.whyNot).toMatch(/prepared or edited/)
    await database()`update sheet_revisions set edited_by = ${cast.ids.engineer} where id = ${sheet.revisionId}`
    if (!project) await database()`delete from project_members where project_id = ${cast.demoProjectId} and person_id = ${priya!.id} and role = 'checker'`
  })

  it('clients and outsiders never read comments (403, audited, nothing leaked)', async () => {
    // A sheet of its own: an issued revision is never changed again (drizzle/0010), so it cannot go back in check.
    const made = await newSheet(cast.engineer, cast.demoProjectId, { title: 'Booster discharge pressure, issued copy', loopTag: 'PIC-214-01', template: 'pi-pressure-loop' })
    await setStatus(made.id, 'in check')
    const path = `/api/revisions/${made.detail.revision.id}/comments`
    expect((await cast.checker.post(path, { ...comment('section', 'scope'), version: made.detail.revision.version })).status).toBe(201)
    await setStatus(made.id, 'issued')
    const client = await cast.client.get(path)
    expect(client.status).toBe(403)
    expect(JSON.stringify(client.body)).not.toContain('datasheet')
    expect(await lastAudit('access.refused', path)).toMatchObject({ status: 403 })
    expect((await cast.outsider.get(path)).status).toBe(403)
  })
})

describe('answering and resolving', () => {
  it('the engineer answers, the checker resolves; the open count falls to zero', async () => {
    const path = `/api/revisions/${sheet.revisionId}/comments`
    const listed = await cast.engineer.get(path)
    expect(listed.status).toBe(200)
    expect(listed.body.canAnswer).toBe(true)
    const ids: number[] = listed.body.comments.map((c: { id: number }) => c.id)

    // The checker cannot answer, the engineer cannot resolve.
    expect((await cast.checker.patch(`/api/comments/${ids[0]}`, { action: 'answer', version: sheet.version, answer: 'x' })).status).toBe(403)
    expect((await cast.engineer.patch(`/api/comments/${ids[0]}`, { action: 'resolve', version: sheet.version })).status).toBe(403)

    const answered = await cast.engineer.patch(`/api/comments/${ids[0]}`, { action: 'answer', version: sheet.version, answer: 'Cited the pump curve, rev C.' })
    expect(answered.status).toBe(200)
    expect(answered.body.comments[0]).toMatchObject({ state: 'answered', answer: 'Cited the pump curve, rev C.' })

    expect((await cast.checker.patch(`/api/comments/${ids[0]}`, { action: 'resolve', version: sheet.version + 1 })).status).toBe(409)
    for (const id of ids) {
      const resolved = await cast.checker.patch(`/api/comments/${id}`, { action: 'resolve', version: sheet.version })
      expect(resolved.status).toBe(200)
    }
    const after = await cast.checker.get(path)
    expect(after.body.open).toBe(0)
    expect(after.body.comments.every((c: { state: string }) => c.state === 'resolved')).toBe(true)
    const [open] = await database()`select count(*)::int as n from comments where revision_id = ${sheet.revisionId} and resolved_at is null`
    expect(open!.n).toBe(0)
    expect((await cast.checker.patch(`/api/comments/${ids[0]}`, { action: 'resolve', version: sheet.version })).status).toBe(409)
  })

  it('a draft takes no comments; 404 for a comment or revision that does not exist', async () => {
    const draft = await newSheet(cast.engineer, cast.demoProjectId)
    const answer = await cast.checker.post(`/api/revisions/${draft.detail.revision.id}/comments`, { version: 1, anchorKind: 'section', anchor: 'scope', body: 'Too early' })
    expect(answer.status).toBe(403)
    expect((await cast.checker.get('/api/revisions/2147483000/comments')).status).toBe(404)
    expect((await cast.engineer.patch('/api/comments/2147483000', { action: 'resolve', version: 1 })).status).toBe(404)
  })
})

// Who reaches the sheet and package routes: every role, signed out, a member of the project and an engineer of
// another project (product.md, "Who uses it"). Every refusal is audited and gives nothing of the sheet away.
import { beforeAll, describe, expect, it } from 'vitest'
import type { Client } from './support/client'
import { database } from './support/client'
import { lastAudit, newSheet, setStatus, theCast, type Cast } from './support/sheets'

type Who = 'admin' | 'engineer' | 'secondEngineer' | 'checker' | 'client' | 'outsider' | 'signedOut'
const everyone: Who[] = ['admin', 'engineer', 'secondEngineer', 'checker', 'client', 'outsider', 'signedOut']

interface Row {
  route: string
  /** Expected status for each person. */
  expect: Record<Who, number>
  call: (who: Client, fixture: Fixture) => Promise<{ status: number; body: unknown }>
}

interface Fixture {
  cast: Cast
  draft: { id: number; number: string; title: string; loopTag: string; version: number; document: unknown }
  otherDraft: { id: number; title: string }
  issuedId: number
}

let fixture: Fixture

beforeAll(async () => {
  const cast = await theCast()
  const title = 'Restricted draft: north intake chlorination'
  const made = await newSheet(cast.engineer, cast.demoProjectId, { title, loopTag: 'AIC-214-77', template: 'dead-time-flow-loop' })
  const other = await newSheet(cast.outsider, cast.otherProjectId, { title: 'Other project’s draft: weir level', loopTag: 'LIC-888-01' })
  const issued = await newSheet(cast.engineer, cast.demoProjectId, { title: 'Issued test sheet', loopTag: 'PIC-214-78' })
  await setStatus(issued.id, 'issued')
  fixture = {
    cast,
    draft: { id: made.id, number: made.number, title, loopTag: 'AIC-214-77', version: made.detail.revision.version, document: made.detail.revision.document },
    otherDraft: { id: other.id, title: 'Other project’s draft: weir level' },
    issuedId: issued.id,
  }
})

const read = { admin: 200, engineer: 200, secondEngineer: 200, checker: 200, client: 200, outsider: 403, signedOut: 401 }
const readNoDrafts = { ...read, client: 403 }
const write = { admin: 403, engineer: 201, secondEngineer: 201, checker: 403, client: 403, outsider: 403, signedOut: 401 }
const otherProject = { admin: 200, engineer: 403, secondEngineer: 403, checker: 403, client: 403, outsider: 200, signedOut: 401 }

const rows: Row[] = [
  { route: 'GET /api/projects/[id]/sheets', expect: read, call: (who, f) => who.get(`/api/projects/${f.cast.demoProjectId}/sheets`) },
  { route: 'GET /api/projects/[another]/sheets', expect: otherProject, call: (who, f) => who.get(`/api/projects/${f.cast.otherProjectId}/sheets`) },
  {
    route: 'POST /api/projects/[id]/sheets',
    expect: write,
    call: (who, f) => who.post(`/api/projects/${f.cast.demoProjectId}/sheets`, { title: 'Access matrix sheet', loopTag: 'TIC-214-90' }),
  },
  {
    route: 'POST /api/projects/[another]/sheets',
    expect: { ...write, engineer: 403, secondEngineer: 403, outsider: 201 },
    call: (who, f) => who.post(`/api/projects/${f.cast.otherProjectId}/sheets`, { title: 'Access matrix sheet', loopTag: 'TIC-888-90' }),
  },
  { route: 'GET /api/sheets/[draft]', expect: readNoDrafts, call: (who, f) => who.get(`/api/sheets/${f.draft.id}`) },
  { route: 'GET /api/sheets/[issued]', expect: read, call: (who, f) => who.get(`/api/sheets/${f.issuedId}`) },
  { route: 'GET /api/sheets/[another project’s draft]', expect: otherProject, call: (who, f) => who.get(`/api/sheets/${f.otherDraft.id}`) },
  {
    route: 'PATCH /api/sheets/[draft]',
    expect: { ...write, engineer: 200, secondEngineer: 200 },
    // Each save reads the version first, so the matrix tests who may save, not the version check.
    call: async (who, f) => {
      const [row] = await database()`select version from sheet_revisions where sheet_id = ${f.draft.id}`
      return who.patch(`/api/sheets/${f.draft.id}`, { version: row!.version, document: f.draft.document })
    },
  },
  {
    route: 'PATCH /api/sheets/[issued]',
    expect: { ...write, engineer: 403, secondEngineer: 403 },
    call: async (who, f) => {
      const [row] = await database()`select version, document from sheet_revisions where sheet_id = ${f.issuedId}`
      return who.patch(`/api/sheets/${f.issuedId}`, { version: row!.version, document: row!.document })
    },
  },
  {
    route: 'PATCH /api/sheets/[another project’s draft]',
    expect: { ...write, engineer: 403, secondEngineer: 403, outsider: 200 },
    call: async (who, f) => {
      const [row] = await database()`select version, document from sheet_revisions where sheet_id = ${f.otherDraft.id}`
      return who.patch(`/api/sheets/${f.otherDraft.id}`, { version: row!.version, document: row!.document })
    },
  },
  { route: 'GET /api/projects/[id]/packages', expect: read, call: (who, f) => who.get(`/api/projects/${f.cast.demoProjectId}/packages`) },
  { route: 'GET /api/projects/[another]/packages', expect: otherProject, call: (who, f) => who.get(`/api/projects/${f.cast.otherProjectId}/packages`) },
  {
    route: 'POST /api/projects/[id]/packages',
    expect: write,
    call: (who, f) => who.post(`/api/projects/${f.cast.demoProjectId}/packages`, { title: 'Access matrix package' }),
  },
  {
    route: 'POST /api/projects/[another]/packages',
    expect: { ...write, engineer: 403, secondEngineer: 403, outsider: 201 },
    call: (who, f) => who.post(`/api/projects/${f.cast.otherProjectId}/packages`, { title: 'Access matrix package' }),
  },
  {
    route: 'GET /api/sheets',
    expect: { admin: 200, engineer: 200, secondEngineer: 200, checker: 200, client: 200, outsider: 200, signedOut: 401 },
    call: (who) => who.get('/api/sheets'),
  },
]

const cases = rows.flatMap((row) => everyone.map((who) => [row.route, who, row.expect[who], row] as const))

describe('sheet and package routes: who may', () => {
  it.each(cases)('%s as %s answers %i', async (_route, who, status, row) => {
    const answer = await row.call(fixture.cast[who], fixture)
    expect(answer.status).toBe(status)
    if (status === 401 || status === 403) {
      // Nothing of the sheets is given away in a refusal.
      const text = JSON.stringify(answer.body)
      for (const secret of [fixture.draft.title, fixture.draft.loopTag, fixture.otherDraft.title, 'Issued test sheet', 'Kc*(Ti*s + 1)']) expect(text).not.toContain(secret)
    }
  })

  it('records a refusal in the audit trail with who asked', async () => {
    const { cast } = fixture
    const path = `/api/sheets/${fixture.draft.id}`
    expect((await cast.client.get(path)).status).toBe(403)
    const [client] = await database()`select id from people where email = 'dana.whitlock@example.com'`
    expect(await lastAudit('access.refused', path)).toMatchObject({ actor_id: client!.id, status: 403, method: 'GET', detail: { sheetId: fixture.draft.id, status: 'draft' } })
    expect((await cast.checker.patch(path, { version: 1, document: fixture.draft.document })).status).toBe(403)
    expect(await lastAudit('access.refused', path)).toMatchObject({ status: 403, method: 'PATCH' })
    expect((await cast.signedOut.get(`/api/projects/${cast.demoProjectId}/sheets`)).status).toBe(401)
    expect(await lastAudit('access.refused', `/api/projects/${cast.demoProjectId}/sheets`)).toMatchObject({ actor_id: null, status: 401 })
  })

  it('never lists a draft to a client, only the issued revisions', async () => {
    const { cast } = fixture
    const listed = await cast.client.get(`/api/projects/${cast.demoProjectId}/sheets?pageSize=100`)
    expect(listed.status).toBe(200)
    expect(listed.body.items.length).toBeGreaterThan(0)
    expect(listed.body.items.every((row: { status: string }) => row.status === 'issued' || row.status === 'superseded')).toBe(true)
    expect(listed.body.items.map((row: { id: number }) => row.id)).toContain(fixture.issuedId)
    expect(listed.body.total).toBe(listed.body.items.length)
    // Asking for drafts by name gives none either.
    const drafts = await cast.client.get(`/api/projects/${cast.demoProjectId}/sheets?status=draft`)
    expect(drafts.body).toMatchObject({ items: [], total: 0 })
    // The package counts show only what the client may see: the demo package's four sheets are drafts.
    const packages = await cast.client.get(`/api/projects/${cast.demoProjectId}/packages`)
    const demoPackage = packages.body.find((row: { title: string }) => row.title === 'Hollins Booster Station control loops')
    expect(demoPackage.sheetCount).toBe(0)
    const staffView = await cast.checker.get(`/api/projects/${cast.demoProjectId}/packages`)
    expect(staffView.body.find((row: { title: string }) => row.title === 'Hollins Booster Station control loops').sheetCount).toBe(4)
  })

  it('answers canEdit as the rules give it', async () => {
    const { cast } = fixture
    expect((await cast.engineer.get(`/api/sheets/${fixture.draft.id}`)).body.canEdit).toBe(true)
    expect((await cast.checker.get(`/api/sheets/${fixture.draft.id}`)).body.canEdit).toBe(false)
    expect((await cast.admin.get(`/api/sheets/${fixture.draft.id}`)).body.canEdit).toBe(false)
    expect((await cast.engineer.get(`/api/sheets/${fixture.issuedId}`)).body.canEdit).toBe(false)
    expect((await cast.client.get(`/api/sheets/${fixture.issuedId}`)).body.canEdit).toBe(false)
  })
})

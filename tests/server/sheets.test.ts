// Sheets over HTTP: creation (blank, from a template, a copy) numbered by the firm's pattern, the list's search,
// filters, sorts and pages, the detail, and saves: recomputed by the server's engine, stale versions refused with
// the stored revision, and of two racing saves exactly one kept.
import { beforeAll, describe, expect, inject, it } from 'vitest'
import { database, newPerson, signedIn, unique, type Client } from './support/client'
import { heavyLoop } from './support/loops'
import { newSheet, readTemplate, setStatus, theCast, type Cast } from './support/sheets'
import { loopFileOf } from '../../shared/schemas/sheet'

let cast: Cast
/** A project of its own, so the list's counts are this file's alone. */
let projectId: number
let projectNumber: string
let engineer: Client

beforeAll(async () => {
  cast = await theCast()
  const [northmere] = await database()`select id from organisations where name = 'Northmere Water District'`
  projectNumber = unique('LST-').toUpperCase()
  const project = await cast.admin.post('/api/projects', { number: projectNumber, name: 'List test works', organisationId: northmere!.id })
  projectId = project.body.id
  for (const personId of [cast.ids.engineer, cast.ids.secondEngineer])
    expect((await cast.admin.post(`/api/projects/${projectId}/members`, { personId, role: 'engineer' })).status).toBe(201)
  engineer = cast.engineer
})

describe('creating sheets', () => {
  it('numbers sheets by the firm’s pattern, unique in the project, even when created at the same moment', async () => {
    const firm = (await cast.admin.get('/api/firm')).body
    expect(firm.sheetNumbering).toBe('{project}-{seq:02}')
    const answers = await Promise.all(
      Array.from({ length: 6 }, (_, i) => engineer.post(`/api/projects/${projectId}/sheets`, { title: `Concurrent sheet ${i}`, loopTag: `TIC-1-${i}` })),
    )
    expect(answers.map((answer) => answer.status)).toEqual([201, 201, 201, 201, 201, 201])
    const numbers = answers.map((answer) => answer.body.number).sort()
    expect(numbers).toEqual([1, 2, 3, 4, 5, 6].map((seq) => `${projectNumber}-0${seq}`))
  })

  it('starts a blank sheet as a draft at revision 0, version 1, computed by the server', async () => {
    const { id, detail } = await newSheet(engineer, projectId, { title: 'Blank start', loopTag: 'XIC-1-01' })
    expect(detail).toMatchObject({ id, projectId, projectNumber, title: 'Blank start', loopTag: 'XIC-1-01', packageId: null, canEdit: true, clientName: 'Northmere Water District' })
    expect(detail.revision).toMatchObject({ index: 0, label: null, status: 'draft', version: 1, engineVersion: '1.0.1', preparedBy: { id: cast.ids.engineer, name: 'Tomás Okafor' } })
    expect(detail.revision.document.loop.title).toBe('Blank start')
    // K/(T s + 1) under unity feedback, K = 1, T = 10: T(s) = 0.1/(s + 0.2), one pole at −0.2 (by hand).
    expect(detail.revision.result.closed_loop.den).toEqual([1, 0.2])
    expect(detail.revision.result.poles[0].re).toBeCloseTo(-0.2, 12)
    expect(detail.firm).toMatchObject({ name: 'Cobalt Ridge Engineering', paperSize: 'A4' })
    expect(detail.firm.defaultCautions.length).toBeGreaterThan(0)
  })

  it('starts from each template with its whole document, the result equal to /api/calculate’s', async () => {
    const templates = (await engineer.get('/api/templates')).body as Array<{ name: string; loopTag: string }>
    expect(templates.map((t) => t.name)).toContain('lead-motor-speed-loop')
    for (const template of templates) {
      const { detail } = await newSheet(engineer, projectId, { title: `From ${template.name}`, loopTag: template.loopTag, template: template.name })
      const file = readTemplate(template.name)
      expect(detail.revision.document.scope).toBe(file.document.scope)
      expect(detail.revision.document.parameters).toEqual(file.document.parameters)
      expect(detail.revision.document.assumptions).toEqual(file.document.assumptions)
      const witness = await engineer.post('/api/calculate', loopFileOf(detail.revision.document))
      expect(witness.status).toBe(200)
      expect(detail.revision.result).toEqual(witness.body)
    }
  })

  it('copies a sheet’s current document into a new sheet', async () => {
    const original = await newSheet(engineer, projectId, { title: 'Original', loopTag: 'PIC-1-50', template: 'pi-pressure-loop' })
    const copy = await newSheet(engineer, projectId, { title: 'The copy', loopTag: 'PIC-1-51', copyOf: original.id })
    expect(copy.detail.revision.document.loop.blocks).toEqual(original.detail.revision.document.loop.blocks)
    expect(copy.detail.revision.document.loop.title).toBe('The copy')
    expect(copy.detail.revision.result.closed_loop).toEqual(original.detail.revision.result.closed_loop)
    expect(copy.number).not.toBe(original.number)
  })

  it('refuses a copy of a sheet the engineer cannot read, the same way as one that does not exist', async () => {
    const theirs = await newSheet(cast.outsider, cast.otherProjectId, { title: 'Not yours', loopTag: 'LIC-9-01' })
    const refused = await engineer.post(`/api/projects/${projectId}/sheets`, { title: 'Copy attempt', loopTag: 'LIC-1-60', copyOf: theirs.id })
    const missing = await engineer.post(`/api/projects/${projectId}/sheets`, { title: 'Copy attempt', loopTag: 'LIC-1-60', copyOf: 2_147_483_647 })
    expect(refused.status).toBe(400)
    expect(refused.body.data).toEqual(missing.body.data)
    expect(refused.body.data.field).toBe('copyOf')
    expect(JSON.stringify(refused.body)).not.toContain('Not yours')
  })

  it('puts a sheet in a package of its project, and refuses another project’s package', async () => {
    const made = await engineer.post(`/api/projects/${projectId}/packages`, { title: 'Intake loops' })
    expect(made.status).toBe(201)
    expect(made.body).toMatchObject({ number: 'P01', title: 'Intake loops', sheetCount: 0 })
    expect((await engineer.post(`/api/projects/${projectId}/packages`, { title: 'Second' })).body.number).toBe('P02')
    expect((await engineer.post(`/api/projects/${projectId}/packages`, { number: 'P01', title: 'Taken' })).status).toBe(409)
    const { detail } = await newSheet(engineer, projectId, { title: 'Packaged', loopTag: 'FIC-1-70', packageId: made.body.id })
    expect(detail).toMatchObject({ packageId: made.body.id, packageNumber: 'P01', packageTitle: 'Intake loops' })
    const listed = (await engineer.get(`/api/projects/${projectId}/packages`)).body
    expect(listed.find((row: { id: number }) => row.id === made.body.id).sheetCount).toBe(1)

    const [demoPackage] = await database()`select id from packages where project_id = ${cast.demoProjectId}`
    const elsewhere = await engineer.post(`/api/projects/${projectId}/sheets`, { title: 'Wrong package', loopTag: 'FIC-1-71', packageId: demoPackage!.id })
    expect(elsewhere.status).toBe(400)
    expect(elsewhere.body.data.field).toBe('packageId')
  })
})

describe('the project’s sheet list', () => {
  let listProject: number
  let packageId: number
  const made: Array<{ id: number; number: string; title: string; loopTag: string }> = []

  beforeAll(async () => {
    const [northmere] = await database()`select id from organisations where name = 'Northmere Water District'`
    const project = await cast.admin.post('/api/projects', { number: unique('SRT-').toUpperCase(), name: 'Sort test works', organisationId: northmere!.id })
    listProject = project.body.id
    await cast.admin.post(`/api/projects/${listProject}/members`, { personId: cast.ids.engineer, role: 'engineer' })
    await cast.admin.post(`/api/projects/${listProject}/members`, { personId: cast.ids.secondEngineer, role: 'engineer' })
    packageId = (await engineer.post(`/api/projects/${listProject}/packages`, { title: 'Pumps' })).body.id
    const titles = ['Wash water pump pressure', 'Alum dosing flow', 'Filter 3 level', 'Backwash 100% flow', 'Clearwell 2 level']
    // Twelve sheets, so numbers reach two digits and pages hold part of the list.
    for (let i = 0; i < 12; i++) {
      const title = `${titles[i % titles.length]} ${i}`
      const loopTag = `${['PIC', 'FIC', 'LIC'][i % 3]}-5-${String(i).padStart(2, '0')}`
      const sheet = await newSheet(i % 2 ? cast.secondEngineer : engineer, listProject, { title, loopTag, packageId: i < 4 ? packageId : null })
      made.push({ id: sheet.id, number: sheet.number, title, loopTag })
    }
    await setStatus(made[3]!.id, 'returned')
  })

  const list = (query: string) => engineer.get(`/api/projects/${listProject}/sheets?${query}`)

  it('answers a page of rows in number order with the total', async () => {
    const answer = await list('pageSize=5')
    expect(answer.status).toBe(200)
    expect(answer.body).toMatchObject({ total: 12, page: 1, pageSize: 5 })
    expect(answer.body.items.map((row: { id: number }) => row.id)).toEqual(made.slice(0, 5).map((sheet) => sheet.id))
    expect(answer.body.items[0]).toEqual({
      id: made[0]!.id,
      number: made[0]!.number,
      title: made[0]!.title,
      loopTag: made[0]!.loopTag,
      status: 'draft',
      revisionIndex: 0,
      revisionLabel: null,
      packageId,
      packageNumber: 'P01',
      updatedAt: expect.stringMatching(/^\d{4}-\d\d-\d\dT/),
      updatedByName: 'Tomás Okafor',
    })
    const third = await list('pageSize=5&page=3')
    expect(third.body.items.map((row: { id: number }) => row.id)).toEqual(made.slice(10).map((sheet) => sheet.id))
    const descending = await list('pageSize=3&dir=desc')
    expect(descending.body.items.map((row: { id: number }) => row.id)).toEqual(made.slice(-3).reverse().map((sheet) => sheet.id))
  })

  it('searches number, title and loop tag, the pattern characters taken literally', async () => {
    expect((await list('q=level')).body.items.map((row: { title: string }) => row.title).sort()).toEqual(made.filter((s) => /level/.test(s.title)).map((s) => s.title).sort())
    expect((await list('q=fic-5')).body.total).toBe(4)
    expect((await list(`q=${encodeURIComponent(made[11]!.number)}`)).body.items.map((row: { id: number }) => row.id)).toEqual([made[11]!.id])
    // "100%" is in one title; a bare % would match every row if it were a wildcard.
    expect((await list(`q=${encodeURIComponent('100%')}`)).body.total).toBe(made.filter((s) => s.title.includes('100%')).length)
    expect((await list(`q=${encodeURIComponent('%')}`)).body.total).toBe(made.filter((s) => s.title.includes('%')).length)
    expect((await list('q=_')).body.total).toBe(0)
  })

  it('filters by status and package', async () => {
    const returned = await list('status=returned')
    expect(returned.body.items.map((row: { id: number; status: string }) => [row.id, row.status])).toEqual([[made[3]!.id, 'returned']])
    expect((await list('status=draft')).body.total).toBe(11)
    const packaged = await list(`packageId=${packageId}`)
    expect(packaged.body.items.map((row: { id: number }) => row.id)).toEqual(made.slice(0, 4).map((sheet) => sheet.id))
  })

  it('sorts by title, status and last change', async () => {
    const byTitle = (await list('sort=title&pageSize=100')).body.items.map((row: { title: string }) => row.title)
    expect(byTitle).toEqual(made.map((sheet) => sheet.title).sort((a, b) => (a < b ? -1 : a > b ? 1 : 0)))
    const byStatus = (await list('sort=status&dir=desc&pageSize=100')).body.items.map((row: { status: string }) => row.status)
    expect(byStatus[0]).toBe('returned')
    // A save moves a sheet to the end of "last change" order, and names who saved it.
    const target = made[5]!
    const detail = (await engineer.get(`/api/sheets/${target.id}`)).body
    expect((await engineer.patch(`/api/sheets/${target.id}`, { version: detail.revision.version, document: detail.revision.document })).status).toBe(200)
    const byChange = (await list('sort=updatedAt&dir=desc&pageSize=1')).body.items[0]
    expect(byChange).toMatchObject({ id: target.id, updatedByName: 'Tomás Okafor' })
  })

  it('lists the engineer’s own drafts across projects on GET /api/sheets', async () => {
    const mine = await cast.secondEngineer.get('/api/sheets?pageSize=100&q=SRT-')
    expect(mine.status).toBe(200)
    const ownIds = made.filter((_, i) => i % 2 === 1).map((sheet) => sheet.id)
    expect(mine.body.items.map((row: { id: number }) => row.id).sort()).toEqual(ownIds.sort())
    expect(mine.body.items[0]).toMatchObject({ projectId: listProject, projectNumber: expect.stringMatching(/^SRT-/) })
    // A sheet no longer a draft leaves "drafts" but stays in "all".
    await setStatus(ownIds[0]!, 'in check')
    expect((await cast.secondEngineer.get('/api/sheets?pageSize=100&q=SRT-')).body.total).toBe(ownIds.length - 1)
    expect((await cast.secondEngineer.get('/api/sheets?pageSize=100&q=SRT-&mine=all')).body.total).toBe(ownIds.length)
    // Someone who prepared nothing has nothing listed.
    expect((await cast.checker.get('/api/sheets')).body).toMatchObject({ items: [], total: 0 })
  })
})

describe('saving a sheet', () => {
  it('saves the document, bumps the version and stores the server’s result for it', async () => {
    const { id, detail } = await newSheet(engineer, projectId, { title: 'Pressure save', loopTag: 'PIC-1-80', template: 'pi-pressure-loop' })
    const document = structuredClone(detail.revision.document)
    document.loop.parameters.Kc.value = 1.1
    document.scope = 'Retuned: proportional gain raised to 1.1.'
    const saved = await cast.secondEngineer.patch(`/api/sheets/${id}`, { version: 1, document, title: 'Pressure save, retuned' })
    expect(saved.status).toBe(200)
    expect(saved.body).toMatchObject({ title: 'Pressure save, retuned', revision: { version: 2, editedBy: { id: cast.ids.secondEngineer }, preparedBy: { id: cast.ids.engineer } } })
    expect(saved.body.revision.document.scope).toBe(document.scope)
    const witness = await engineer.post('/api/calculate', loopFileOf(document))
    expect(saved.body.revision.result).toEqual(witness.body)
    expect(saved.body.revision.result.closed_loop).not.toEqual(detail.revision.result.closed_loop)
    const [stored] = await database()`select version, edited_by, document->'loop'->'parameters'->'Kc'->>'value' as kc from sheet_revisions where sheet_id = ${id}`
    expect(stored).toEqual({ version: 2, edited_by: cast.ids.secondEngineer, kc: '1.1' })
    const [audit] = await database()`select action, actor_id, detail from audit_events where subject_type = 'sheet' and subject_id = ${String(id)} order by id desc limit 1`
    expect(audit).toMatchObject({ action: 'sheet.saved', actor_id: cast.ids.secondEngineer, detail: { version: 2 } })
  })

  it('refuses a stale version with 409 and the revision as stored', async () => {
    const { id, detail } = await newSheet(engineer, projectId, { title: 'Stale save', loopTag: 'PIC-1-81', template: 'pi-pressure-loop' })
    const first = structuredClone(detail.revision.document)
    first.conclusions = 'Saved first.'
    expect((await engineer.patch(`/api/sheets/${id}`, { version: 1, document: first })).status).toBe(200)
    const late = structuredClone(detail.revision.document)
    late.conclusions = 'Saved from a stale copy.'
    const refused = await cast.secondEngineer.patch(`/api/sheets/${id}`, { version: 1, document: late })
    expect(refused.status).toBe(409)
    expect(refused.body.data.current.revision).toMatchObject({ version: 2, document: { conclusions: 'Saved first.' } })
    expect(refused.body.data.current.id).toBe(id)
    const [stored] = await database()`select version, document->>'conclusions' as conclusions from sheet_revisions where sheet_id = ${id}`
    expect(stored).toEqual({ version: 2, conclusions: 'Saved first.' })
  })

  it('keeps exactly one of two saves racing from the same version', async () => {
    const { id, detail } = await newSheet(engineer, projectId, { title: 'Race', loopTag: 'PIC-1-82', template: 'cascade-loop' })
    for (let round = 0; round < 3; round++) {
      const version = detail.revision.version + round
      const mine = structuredClone(detail.revision.document)
      mine.conclusions = `engineer, round ${round}`
      const theirs = structuredClone(detail.revision.document)
      theirs.conclusions = `second engineer, round ${round}`
      const answers = await Promise.all([
        engineer.patch(`/api/sheets/${id}`, { version, document: mine }),
        cast.secondEngineer.patch(`/api/sheets/${id}`, { version, document: theirs }),
      ])
      expect(answers.map((answer) => answer.status).sort()).toEqual([200, 409])
      const winner = answers.find((answer) => answer.status === 200)!
      const loser = answers.find((answer) => answer.status === 409)!
      const [stored] = await database()`select version, document->>'conclusions' as conclusions from sheet_revisions where sheet_id = ${id}`
      expect(stored).toEqual({ version: version + 1, conclusions: winner.body.revision.document.conclusions })
      expect(loser.body.data.current.revision.version).toBe(version + 1)
    }
  })

  it('answers 400 naming the field when the engine refuses the document, and keeps the stored one', async () => {
    const { id, detail } = await newSheet(engineer, projectId, { title: 'Bad edit', loopTag: 'PIC-1-83', template: 'pi-pressure-loop' })
    const document = structuredClone(detail.revision.document)
    document.loop.blocks.P.den = 's^'
    const refused = await engineer.patch(`/api/sheets/${id}`, { version: 1, document })
    expect(refused.status).toBe(400)
    expect(refused.body.data.field).toBe('loop.blocks.P.den')
    expect(refused.body.data.message).toContain('"s^" is not a complete expression')
    const undefinedParameter = structuredClone(detail.revision.document)
    undefinedParameter.loop.blocks.A.num = 'Kx'
    expect((await engineer.patch(`/api/sheets/${id}`, { version: 1, document: undefinedParameter })).body.data.field).toMatch(/^loop\.blocks\.A/)
    const [stored] = await database()`select version from sheet_revisions where sheet_id = ${id}`
    expect(stored!.version).toBe(1)
  })

  it('answers 422 when the engine stops at its time limit, and keeps the stored document', async () => {
    const { id, detail } = await newSheet(engineer, projectId, { title: 'Heavy', loopTag: 'TIC-1-84' })
    // The heaviest file the limits let through (1,024 corners), which runs well past the engine's time limit.
    const loop = heavyLoop()
    const document = {
      ...detail.revision.document,
      loop,
      parameters: Object.keys(loop.parameters).map((symbol) => ({ symbol, description: '', source: 'test' })),
      blockOrder: Object.keys(loop.blocks),
    }
    const stopped = await engineer.patch(`/api/sheets/${id}`, { version: 1, document })
    expect(stopped.status, JSON.stringify(stopped.body).slice(0, 400)).toBe(422)
    expect(stopped.body.message).toMatch(/time limit/)
    const [stored] = await database()`select version from sheet_revisions where sheet_id = ${id}`
    expect(stored!.version).toBe(1)
  })

  it('refuses a save by a checker, a client, or on a sheet in check', async () => {
    const { id, detail } = await newSheet(cast.engineer, cast.demoProjectId, { title: 'Who saves', loopTag: 'PIC-214-85' })
    const body = { version: 1, document: detail.revision.document }
    expect((await cast.checker.patch(`/api/sheets/${id}`, body)).status).toBe(403)
    expect((await cast.client.patch(`/api/sheets/${id}`, body)).status).toBe(403)
    await setStatus(id, 'in check')
    expect((await cast.engineer.patch(`/api/sheets/${id}`, body)).status).toBe(403)
    await setStatus(id, 'returned')
    expect((await cast.engineer.patch(`/api/sheets/${id}`, body)).status).toBe(200)
    const [stored] = await database()`select version from sheet_revisions where sheet_id = ${id}`
    expect(stored!.version).toBe(2)
  })

  it('lets a person removed from the project no longer read or save', async () => {
    const person = await newPerson(cast.admin, ['engineer'])
    await cast.admin.post(`/api/projects/${projectId}/members`, { personId: person.id, role: 'engineer' })
    const former = await signedIn(person.email, person.password)
    const { id, detail } = await newSheet(former, projectId, { title: 'Left behind', loopTag: 'PIC-1-86' })
    expect((await cast.admin.delete(`/api/projects/${projectId}/members/${person.id}`)).status).toBe(200)
    expect((await former.get(`/api/sheets/${id}`)).status).toBe(403)
    expect((await former.patch(`/api/sheets/${id}`, { version: 1, document: detail.revision.document })).status).toBe(403)
    expect((await former.get('/api/sheets')).body.total).toBe(0)
  })
})

describe('the current revision’s copy on sheets and the list’s indexes', () => {
  it('follows the highest revision and ignores writes to an older one', async () => {
    const { id } = await newSheet(engineer, projectId, { title: 'Two revisions', loopTag: 'PIC-1-90' })
    const sql = database()
    await sql`insert into sheet_revisions (sheet_id, revision_index, status, document, engine_version, prepared_by, edited_by, label)
      select sheet_id, 1, 'draft', document, engine_version, ${cast.ids.secondEngineer}, ${cast.ids.secondEngineer}, null from sheet_revisions where sheet_id = ${id}`
    await sql`update sheet_revisions set status = 'issued', label = 'A' where sheet_id = ${id} and revision_index = 0`
    const [copy] = await sql`select current_revision_index, current_status, current_revision_label, current_prepared_by from sheets where id = ${id}`
    expect(copy).toEqual({ current_revision_index: 1, current_status: 'draft', current_revision_label: null, current_prepared_by: cast.ids.secondEngineer })
    const row = (await engineer.get(`/api/projects/${projectId}/sheets?q=PIC-1-90`)).body.items[0]
    expect(row).toMatchObject({ id, revisionIndex: 1, status: 'draft' })
    expect((await engineer.get(`/api/sheets/${id}`)).body.revision).toMatchObject({ index: 1, preparedBy: { id: cast.ids.secondEngineer } })
  })

  it('serves each sort of the page query from an index of sheets, never a sort of the revisions', async () => {
    // The service's own SQL, captured from drizzle; the planner told not to scan, so the plan shows what the
    // indexes can serve (npm run bench measures them with 10,000 sheets, where the planner picks them itself).
    const { default: postgres } = await import('postgres')
    const { drizzle } = await import('drizzle-orm/postgres-js')
    const schema = await import('../../server/db/schema')
    const { listProjectSheets } = await import('../../server/services/sheets')
    const { sheetsQuerySchema } = await import('../../shared/schemas/sheets')
    const client = postgres(inject('databaseUrl'), { max: 1, onnotice: () => {} })
    try {
      const expected = { number: 'sheets_project_number_order', title: 'sheets_project_title', status: 'sheets_project_status', updatedAt: 'sheets_project_edited_at' }
      for (const [sort, index] of Object.entries(expected)) {
        const captured: Array<{ query: string; params: unknown[] }> = []
        const db = drizzle(client, { schema, logger: { logQuery: (query, params) => captured.push({ query, params }) } })
        await listProjectSheets(db as never, projectId, sheetsQuerySchema.parse({ sort }), { id: cast.ids.engineer, roles: ['engineer'] })
        const page = captured.find((c) => /order by/i.test(c.query) && /limit/i.test(c.query))!
        expect(page.query).not.toMatch(/sheet_revisions/)
        const plan = await client.begin(async (tx) => {
          await tx`set local enable_seqscan = off`
          await tx`set local enable_sort = off`
          return tx.unsafe(`explain ${page.query}`, page.params as never[])
        })
        expect(plan.map((line) => line['QUERY PLAN']).join('\n'), sort).toContain(index)
      }
    } finally {
      await client.end()
    }
  })
})

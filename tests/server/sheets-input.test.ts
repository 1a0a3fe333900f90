// Bad input to the sheet and package routes: always 400 naming the field (or 404 for an id that fits but does not
// exist), never 500 and never a row written. Covers NUL, lone surrogates, ids past 32 bits, wrong types, unknown
// keys, broken documents and broken JSON.
import { beforeAll, describe, expect, it } from 'vitest'
import { inject } from 'vitest'
import { database } from './support/client'
import { newSheet, theCast, type Cast } from './support/sheets'

let cast: Cast
let sheet: { id: number; detail: any }

beforeAll(async () => {
  cast = await theCast()
  sheet = await newSheet(cast.engineer, cast.demoProjectId, { title: 'Input test sheet', loopTag: 'PIC-214-60', template: 'pi-pressure-loop' })
})

const NUL = '\u0000'
const LONE = '\ud800'
const PAST_32_BITS = 4_294_967_296

describe('bad input to the sheet routes', () => {
  it.each([
    ['no body fields', {}, 'title'],
    ['a NUL in the title', { title: `Bad${NUL}title`, loopTag: 'PIC-1' }, 'title'],
    ['a lone surrogate in the title', { title: `Bad${LONE}`, loopTag: 'PIC-1' }, 'title'],
    ['a loop tag with a NUL', { title: 'T', loopTag: `PIC${NUL}` }, 'loopTag'],
    ['a title of 201 characters', { title: 'x'.repeat(201), loopTag: 'PIC-1' }, 'title'],
    ['a package id past 32 bits', { title: 'T', loopTag: 'PIC-1', packageId: PAST_32_BITS }, 'packageId'],
    ['a package id as text', { title: 'T', loopTag: 'PIC-1', packageId: '1' }, 'packageId'],
    ['a copy of an id past 32 bits', { title: 'T', loopTag: 'PIC-1', copyOf: PAST_32_BITS }, 'copyOf'],
    ['a template and a copy', { title: 'T', loopTag: 'PIC-1', template: 'pi-pressure-loop', copyOf: 1 }, 'copyOf'],
    ['an unknown template', { title: 'T', loopTag: 'PIC-1', template: 'no-such-loop' }, 'template'],
    ['a template name that walks out of sheets/', { title: 'T', loopTag: 'PIC-1', template: '../package' }, 'template'],
    ['an unknown key', { title: 'T', loopTag: 'PIC-1', owner: 1 }, 'owner'],
  ])('POST /api/projects/[id]/sheets refuses %s with 400', async (_what, body, field) => {
    const before = await database()`select count(*)::int as n from sheets`
    const answer = await cast.engineer.post(`/api/projects/${cast.demoProjectId}/sheets`, body)
    expect(answer.status).toBe(400)
    expect(answer.body.data.field).toBe(field)
    const after = await database()`select count(*)::int as n from sheets`
    expect(after[0]!.n).toBe(before[0]!.n)
  })

  it.each([
    ['a missing version', (d: any) => ({ document: d }), 'version'],
    ['a version past 32 bits', (d: any) => ({ version: PAST_32_BITS, document: d }), 'version'],
    ['a version as text', (d: any) => ({ version: '1', document: d }), 'version'],
    ['no document', () => ({ version: 1 }), 'document'],
    ['a NUL in a block label (free text of the loop file)', (d: any) => withChange(d, (x) => (x.loop.blocks.P.label = `Pump${NUL}`)), 'document.loop.blocks.P.label'],
    ['a lone surrogate in a unit', (d: any) => withChange(d, (x) => (x.loop.parameters.Kc.unit = `%${LONE}`)), 'document.loop.parameters.Kc.unit'],
    ['a NUL in a key', (d: any) => withChange(d, (x) => (x.loop.criteria[`gain${NUL}`] = { min: 1 })), 'document.loop.criteria'],
    ['a NUL in the scope', (d: any) => withChange(d, (x) => (x.scope = `Scope${NUL}`)), 'document.scope'],
    ['a parameter missing from the table', (d: any) => withChange(d, (x) => x.parameters.pop()), 'document.parameters'],
    ['a block missing from the order', (d: any) => withChange(d, (x) => x.blockOrder.pop()), 'document.blockOrder'],
    ['a value that is text', (d: any) => withChange(d, (x) => (x.loop.parameters.Kc.value = '1')), 'document.loop.parameters.Kc.value'],
    ['min above max', (d: any) => withChange(d, (x) => Object.assign(x.loop.parameters.Kc, { min: 2, max: 1 })), 'document.loop.parameters.Kc.min'],
    ['a structure naming a missing block', (d: any) => withChange(d, (x) => (x.loop.structure = { feedback: { forward: 'Z' } })), 'document.loop.structure.feedback.forward'],
    ['an assumption that is empty', (d: any) => withChange(d, (x) => x.assumptions.push('   ')), 'document.assumptions.3'],
    ['a title with a NUL', (d: any) => ({ version: 1, document: d, title: `T${NUL}` }), 'title'],
    ['an unknown key', (d: any) => ({ version: 1, document: d, status: 'issued' }), 'status'],
  ])('PATCH /api/sheets/[id] refuses %s with 400 naming the field', async (_what, make, field) => {
    const answer = await cast.engineer.patch(`/api/sheets/${sheet.id}`, make(structuredClone(sheet.detail.revision.document)))
    expect(answer.status).toBe(400)
    expect(answer.body.data.field).toBe(field)
    const [stored] = await database()`select version from sheet_revisions where sheet_id = ${sheet.id}`
    expect(stored!.version).toBe(1)
  })

  it('refuses a body that is not JSON, or not an object', async () => {
    for (const body of ['{"version": 1, "document":', 'null', '[1,2]', '"text"']) {
      const answer = await fetch(`${inject('baseUrl')}/api/sheets/${sheet.id}`, {
        method: 'PATCH',
        headers: { 'content-type': 'application/json', cookie: cast.engineer.cookie },
        body,
      })
      expect(answer.status).toBe(400)
    }
  })

  it.each([
    ['GET', '/api/sheets/4294967296', 400],
    ['GET', '/api/sheets/2147483648', 400],
    ['GET', '/api/sheets/-1', 400],
    ['GET', '/api/sheets/1.5', 400],
    ['GET', '/api/sheets/abc', 400],
    ['GET', '/api/sheets/2147483647', 404],
    ['PATCH', '/api/sheets/4294967296', 400],
    ['GET', '/api/projects/4294967296/sheets', 400],
    ['GET', '/api/projects/2147483647/sheets', 404],
    ['POST', '/api/projects/4294967296/sheets', 400],
    ['POST', '/api/projects/2147483647/sheets', 404],
    ['GET', '/api/projects/4294967296/packages', 400],
    ['POST', '/api/projects/2147483647/packages', 404],
    ['GET', '/api/projects/[demo]/sheets?status=bogus', 400],
    ['GET', '/api/projects/[demo]/sheets?sort=password', 400],
    ['GET', '/api/projects/[demo]/sheets?packageId=4294967296', 400],
    ['GET', '/api/projects/[demo]/sheets?packageId=x', 400],
    ['GET', '/api/projects/[demo]/sheets?page=1e300', 400],
    ['GET', '/api/projects/[demo]/sheets?page=0', 400],
    ['GET', '/api/projects/[demo]/sheets?pageSize=1000', 400],
    ['GET', `/api/projects/[demo]/sheets?q=${encodeURIComponent('x'.repeat(201))}`, 400],
    ['GET', '/api/projects/[demo]/sheets?q=%00', 400],
    ['GET', '/api/projects/[demo]/sheets?q=%ED%A0%80', 200],
    ['GET', '/api/sheets?mine=everyone', 400],
    ['GET', '/api/sheets?page=99999999', 400],
  ])('%s %s answers %i', async (method, path, status) => {
    const resolved = path.replace('[demo]', String(cast.demoProjectId))
    const body =
      method === 'GET' ? undefined
      : method === 'PATCH' ? { version: 1, document: sheet.detail.revision.document }
      : resolved.endsWith('/packages') ? { title: 'T' }
      : { title: 'T', loopTag: 'PIC-1' }
    const answer = await cast.engineer.request(method, resolved, body)
    expect(answer.status).toBe(status)
  })

  it.each([
    ['no title', {}, 'title'],
    ['a NUL in the title', { title: `P${NUL}` }, 'title'],
    ['a number with a slash first', { title: 'T', number: '/P' }, 'number'],
    ['a lone surrogate in the number', { title: 'T', number: `P${LONE}` }, 'number'],
  ])('POST /api/projects/[id]/packages refuses %s with 400', async (_what, body, field) => {
    const answer = await cast.engineer.post(`/api/projects/${cast.demoProjectId}/packages`, body)
    expect(answer.status).toBe(400)
    expect(answer.body.data.field).toBe(field)
  })
})

function withChange(document: any, change: (d: any) => void) {
  change(document)
  return { version: 1, document }
}

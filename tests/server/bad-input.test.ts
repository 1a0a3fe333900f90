// No input of any kind answers 500 (issue 6, finding 2): every route of the route table (support/routes.ts), for
// every caller it admits, gets each bad shape (ids out of PostgreSQL's 32-bit range or not ids at all; NUL
// characters and lone UTF-16 surrogates in text; huge and negative numbers; arrays, objects and null in place of
// values; bodies that are not JSON objects; bad page, page size, search and sort) and must answer a 4xx.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Answer, Client } from './support/client'
import { callerClients, callers, freshClient, Kit, pathOf, routes, type Caller, type RouteRow, type ValueShape } from './support/routes'

/** Path parameters: 0, negative, fractional, past 2³¹ − 1, exponent notation, not a number, an encoded NUL. */
const idShapes = ['0', '-1', '1.5', '2147483648', '1e20', 'abc', '%00']

/** The query shapes of a list route: each must be refused. */
const badQueries = ['page=1e20', 'pageSize=1e9', 'page=0', 'page=abc', 'page=1&page=2', 'q=%00', 'q=a&q=b', 'sort=nonsense', 'dir=sideways', `q=${'x'.repeat(300)}`]
/** Search terms that are fine to send but must not break anything (a LIKE wildcard is searched for as itself). */
const oddQueries = ['q=%', 'q=%25', 'q=_', 'q=%5C']

/** A bad value in JSON text: raw, because a lone surrogate must reach the server as the escape `\ud800`. */
function valueShapes(sample: unknown): Array<{ shape: ValueShape; json: string }> {
  const text = typeof sample === 'string' ? sample : ''
  const shapes: Array<{ shape: ValueShape; json: string }> = [
    { shape: 'nul', json: JSON.stringify(`${text}\u0000`) },
    { shape: 'surrogate', json: `${JSON.stringify(text).slice(0, -1)}\\ud800"` },
    { shape: 'long', json: JSON.stringify('x'.repeat(100_000)) },
    { shape: '1e10', json: '1e10' },
    { shape: '1e20', json: '1e20' },
    { shape: '-1', json: '-1' },
    { shape: 'array', json: '[null]' },
    { shape: 'object', json: '{"x":null}' },
    { shape: 'null', json: 'null' },
  ]
  if (typeof sample === 'number') shapes.push({ shape: 'NaN', json: '"NaN"' })
  // A shape that is the sample itself (a feedback sign of −1, a return path of null) is no bad input.
  return shapes.filter(({ json }) => json !== JSON.stringify(sample))
}

/** Every leaf of a body with its dotted path (array elements by index). */
function leaves(value: unknown, path: string[] = []): Array<{ path: string[]; value: unknown }> {
  if (value !== null && typeof value === 'object') {
    return Object.entries(value).flatMap(([key, child]) => leaves(child, [...path, key]))
  }
  return [{ path, value }]
}

/** JSON text of `body` with the value at `path` replaced by the JSON text `json`. */
function replaced(body: unknown, path: string[], json: string): string {
  const marker = '\u0001REPLACED\u0001'
  const copy = structuredClone(body) as Record<string, unknown>
  let node = copy as Record<string, unknown>
  for (const key of path.slice(0, -1)) node = node[key] as Record<string, unknown>
  node[path[path.length - 1]!] = marker
  return JSON.stringify(copy).replace(JSON.stringify(marker), json)
}

interface Probe {
  label: string
  send: (client: Client) => Promise<Answer>
  /** The shape is valid there after all (RouteRow.accepts): only "never 5xx" is asserted. */
  mayPass?: boolean
}

function probesOf(row: RouteRow, prepared: { params?: Record<string, string>; body?: unknown; query?: Record<string, string> }): Probe[] {
  const probes: Probe[] = []
  const path = pathOf(row, prepared.params, prepared.query)
  for (const name of Object.keys(prepared.params ?? {})) {
    for (const id of idShapes) {
      const bad = pathOf(row, { ...prepared.params, [name]: id }, prepared.query)
      probes.push({ label: `[${name}] = ${id}`, send: (client) => client.request(row.method, bad, prepared.body) })
    }
  }
  // A route's own query (RouteRow prepare's `query`): each value replaced by the id shapes, then missing.
  for (const name of Object.keys(prepared.query ?? {})) {
    for (const value of [...idShapes, '', '%ud800']) {
      const bad = pathOf(row, prepared.params, { ...prepared.query, [name]: value })
      // Revision 0 is a revision: only "never 5xx" holds for it.
      probes.push({ label: `?${name}=${value}`, send: (client) => client.request(row.method, bad, prepared.body), mayPass: value === '0' })
    }
    const { [name]: _left, ...rest } = prepared.query ?? {}
    probes.push({ label: `?${name} missing`, send: (client) => client.request(row.method, pathOf(row, prepared.params, rest), prepared.body) })
  }
  if (prepared.body !== undefined) {
    for (const leaf of leaves(prepared.body)) {
      const accepted = row.accepts?.[leaf.path.join('.')] ?? []
      for (const { shape, json } of valueShapes(leaf.value)) {
        probes.push({
          label: `${leaf.path.join('.')} = ${shape}`,
          send: (client) => client.raw(row.method, path, replaced(prepared.body, leaf.path, json)),
          mayPass: accepted.includes(shape),
        })
      }
    }
    const bodies: Array<[string, string | undefined, string?]> = [
      ['body not JSON', '{"name": '],
      ['body empty', undefined],
      ['body a JSON array', '[]'],
      ['body a JSON string', '"text"'],
      ['body a JSON number', '1e400'],
      ['body form-encoded', 'name=x%00y', 'application/x-www-form-urlencoded'],
    ]
    for (const [label, text, type] of bodies) probes.push({ label, send: (client) => client.raw(row.method, path, text, type) })
    for (const [index, body] of (row.badBodies?.(prepared.body) ?? []).entries()) {
      probes.push({ label: `bad body ${index + 1}`, send: (client) => client.raw(row.method, path, JSON.stringify(body)) })
    }
    for (const [index, form] of (row.badForms?.() ?? []).entries()) {
      probes.push({ label: `bad form ${index + 1}`, send: (client) => client.request(row.method, path, form) })
    }
  }
  if (row.list) {
    for (const query of badQueries) probes.push({ label: `?${query.slice(0, 40)}`, send: (client) => client.request(row.method, `${path}?${query}`) })
    for (const query of oddQueries) probes.push({ label: `?${query}`, send: (client) => client.request(row.method, `${path}?${query}`), mayPass: true })
  }
  if (probes.length === 0) {
    // A route that reads no input at all: it may ignore what it is sent, but must not fail on it.
    probes.push({ label: 'stray query', send: (client) => client.request(row.method, `${path}?page=1e20&q=%00&id=2147483648`), mayPass: true })
    if (row.method !== 'GET') probes.push({ label: 'stray body', send: (client) => client.raw(row.method, path, '{"x":"\u0000\ud800"}'), mayPass: true })
  }
  return probes
}

describe('no input answers 500: every route × every caller it admits × each bad shape', () => {
  let kit: Kit
  let clients: Record<Caller, Client>
  let sent = 0
  beforeAll(async () => {
    kit = await Kit.start()
    clients = await callerClients()
  })
  afterAll(() => {
    console.info(`bad-input sweep: ${sent} requests over ${cases.length} route × caller pairs`)
  })

  const cases = routes.flatMap((row) =>
    callers.filter((caller) => row.expect[caller] < 300).map((caller) => ({ row, caller, label: `${row.method} ${row.route} as ${caller}` })),
  )

  it.each(cases)('$label', async ({ row, caller }) => {
    const prepared = await row.prepare(kit)
    const client = row.ownSession ? await freshClient(caller) : clients[caller]
    const failures: string[] = []
    for (const probe of probesOf(row, prepared)) {
      const answer = await probe.send(client)
      sent++
      const fine = probe.mayPass ? answer.status < 500 : answer.status >= 400 && answer.status < 500
      if (!fine) failures.push(`${probe.label} → ${answer.status} ${JSON.stringify(answer.body).slice(0, 160)}`)
    }
    expect(failures).toEqual([])
  })

  it('names the field of a refused value in data.issues, as the forms read it', async () => {
    const answer = await clients.admin.raw('POST', '/api/organisations', '{"name":"Sample \\ud800 Utility"}')
    expect(answer.status).toBe(400)
    expect(Object.keys(answer.body.data.issues.fieldErrors)).toEqual(['name'])
    const page = await clients.admin.get('/api/people?page=1e20')
    expect(page.status).toBe(400)
    expect(Object.keys(page.body.data.issues.fieldErrors)).toEqual(['page'])
    const id = await clients.admin.patch('/api/people/2147483648', { name: 'Anyone' })
    expect(id.status).toBe(400)
    expect(Object.keys(id.body.data.issues.fieldErrors)).toEqual(['id'])
  })
})

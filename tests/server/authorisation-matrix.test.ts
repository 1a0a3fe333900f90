// Every route × every caller (signed out, admin, engineer, checker, client) → the status of its row in the route
// table (support/routes.ts), with a valid request; and every route acting on one project's record (`scope:
// 'project'`) a second time for a record of another organisation's project, of which none of the demo callers is
// a member (issue 8, "own project and another's"). In every cell, a refusal (401, 403) carries no data of the
// route, and no answer to a caller who is not an admin holds anything of the other project.
import { beforeAll, describe, expect, it } from 'vitest'
import type { Client } from './support/client'
import { callerClients, callers, expectedElsewhere, freshClient, Kit, pathOf, projectScopedRoute, routes, type Caller, type Place, type RouteRow } from './support/routes'

/** What an error answer of Nitro holds; anything more in a refusal would be data of the route. */
const errorKeys = new Set(['error', 'url', 'statusCode', 'statusMessage', 'message'])
/** Words of the demo data that no refusal may contain (names, addresses, the project). */
const leakMarkers = ['@example.com', 'Northmere', 'Hollins', 'NWD-214', 'Cobalt Ridge', 'passwordHash', 'items']

interface Cell {
  row: RouteRow
  caller: Caller
  place: Place
  status: number
  label: string
}

const cells: Cell[] = routes.flatMap((row) => {
  const home = callers.map((caller) => ({ row, caller, place: 'home' as Place, status: row.expect[caller] }))
  const elsewhere = row.scope === 'project' ? callers.map((caller) => ({ row, caller, place: 'elsewhere' as Place, status: expectedElsewhere(row)[caller] })) : []
  return [...home, ...elsewhere].map((cell) => ({
    ...cell,
    label: `${row.method} ${row.route}${row.scope !== 'project' ? '' : cell.place === 'home' ? ' in the own project' : " in another's project"} as ${cell.caller} → ${cell.status}`,
  }))
})

const scopedRows = routes.filter((row) => row.scope === 'project').length
const elsewhereCells = cells.filter((cell) => cell.place === 'elsewhere').length
// The matrix's size, for the note of issue 8: printed with the test output.
console.log(
  `authorisation matrix: ${routes.length} routes × ${callers.length} callers = ${cells.length - elsewhereCells} cells, ` +
    `+ ${scopedRows} project routes × ${callers.length} callers in another's project = ${elsewhereCells} cells; ${cells.length} cells in all`,
)

describe('authorisation matrix: every route × every caller × own project and another’s', () => {
  let kit: Kit
  let clients: Record<Caller, Client>
  let foreign: string[]
  beforeAll(async () => {
    kit = await Kit.start()
    clients = await callerClients()
    // Made before any cell, so every answer of every cell is searched for the other project's records.
    foreign = await kit.elsewhereMarkers()
  })

  it('calls every route that acts on one project’s record from another project too', () => {
    const unscoped = routes.filter((row) => projectScopedRoute.test(row.route) && row.scope !== 'project').map((row) => `${row.method} ${row.route}`)
    expect(unscoped, "give these rows `scope: 'project'` in tests/server/support/routes.ts").toEqual([])
  })

  it.each(cells)('$label', async ({ row, caller, place, status }) => {
    const placeKit = place === 'home' ? kit : kit.elsewhere()
    const prepare = place === 'elsewhere' && row.prepareElsewhere ? row.prepareElsewhere : row.prepare
    const prepared = await prepare(placeKit)
    const client = row.ownSession ? await freshClient(caller) : clients[caller]
    const answer = await client.request(row.method, pathOf(row, prepared.params, prepared.query), prepared.body)
    expect(answer.status, JSON.stringify(answer.body)).toBe(status)
    const text = JSON.stringify(answer.body) ?? ''
    if (answer.status === 401 || answer.status === 403) {
      expect(Object.keys(answer.body ?? {}).filter((key) => !errorKeys.has(key))).toEqual([])
      for (const marker of [...leakMarkers, ...foreign]) expect(text).not.toContain(marker)
    }
    // The demo callers are members of no project of the other organisation: only an admin may read of it.
    if (caller !== 'admin') for (const marker of foreign) expect(text, `${caller} was shown the other project`).not.toContain(marker)
  })
})

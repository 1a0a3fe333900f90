// Every route × every caller (signed out, admin, engineer, checker, client) → the status of its row in the route
// table (support/routes.ts), with a valid request; a refusal (401, 403) carries no data of the route.
import { beforeAll, describe, expect, it } from 'vitest'
import type { Client } from './support/client'
import { callerClients, callers, freshClient, Kit, pathOf, routes, type Caller } from './support/routes'

/** What an error answer of Nitro holds; anything more in a refusal would be data of the route. */
const errorKeys = new Set(['error', 'url', 'statusCode', 'statusMessage', 'message'])
/** Words of the demo data that no refusal may contain (names, addresses, the project). */
const leakMarkers = ['@example.com', 'Northmere', 'Hollins', 'NWD-214', 'Cobalt Ridge', 'passwordHash', 'items']

describe('authorisation matrix: every route × every caller', () => {
  let kit: Kit
  let clients: Record<Caller, Client>
  beforeAll(async () => {
    kit = await Kit.start()
    clients = await callerClients()
  })

  const cases = routes.flatMap((row) => callers.map((caller) => ({ row, caller, label: `${row.method} ${row.route} as ${caller} → ${row.expect[caller]}` })))

  it.each(cases)('$label', async ({ row, caller }) => {
    const prepared = await row.prepare(kit)
    const client = row.ownSession ? await freshClient(caller) : clients[caller]
    const answer = await client.request(row.method, pathOf(row, prepared.params, prepared.query), prepared.body)
    expect(answer.status, JSON.stringify(answer.body)).toBe(row.expect[caller])
    if (answer.status === 401 || answer.status === 403) {
      expect(Object.keys(answer.body ?? {}).filter((key) => !errorKeys.has(key))).toEqual([])
      const text = JSON.stringify(answer.body)
      for (const marker of leakMarkers) expect(text).not.toContain(marker)
    }
  })
})

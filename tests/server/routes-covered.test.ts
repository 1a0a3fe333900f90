// Every file of server/api/ has its row in the route table (support/routes.ts), and every row its file: a new
// route without a row fails here, so the authorisation matrix and the bad-input sweep always cover it.
import { readdirSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import { describe, expect, it } from 'vitest'
import { routes } from './support/routes'

const apiFolder = fileURLToPath(new URL('../../server/api/', import.meta.url))

/** `projects/[id]/index.get.ts` → `GET /api/projects/[id]`, as Nitro names a route from its file. */
function routeOfFile(file: string): string {
  const match = file.match(/^(.*?)(?:\.(get|post|put|patch|delete|head|options))?\.ts$/)
  if (!match) throw new Error(`${file} is not a route file`)
  const [, path, method] = match
  const route = `/api/${path}`.replace(/\/index$/, '').replace(/^\/api\/index$/, '/api')
  return `${(method ?? 'ANY').toUpperCase()} ${route}`
}

const files = (readdirSync(apiFolder, { recursive: true }) as string[]).filter((file) => file.endsWith('.ts')).map((file) => file.split('\\').join('/'))

describe('the route table', () => {
  it('finds the route files', () => {
    expect(files).toContain('people/[id].patch.ts')
    expect(routeOfFile('projects/[id]/members/[personId].delete.ts')).toBe('DELETE /api/projects/[id]/members/[personId]')
    expect(routeOfFile('firm/index.get.ts')).toBe('GET /api/firm')
    expect(routeOfFile('calculate.post.ts')).toBe('POST /api/calculate')
  })

  it('has a row for every file of server/api/', () => {
    const rows = new Set(routes.filter((row) => !row.module).map((row) => `${row.method} ${row.route}`))
    const missing = files.map(routeOfFile).filter((route) => !rows.has(route))
    expect(missing, 'add these routes to tests/server/support/routes.ts').toEqual([])
  })

  it('has a file for every row that is not a module’s own route, and no row twice', () => {
    const fromFiles = new Set(files.map(routeOfFile))
    const stale = routes.filter((row) => !row.module && !fromFiles.has(`${row.method} ${row.route}`)).map((row) => `${row.method} ${row.route}`)
    expect(stale).toEqual([])
    const keys = routes.map((row) => `${row.method} ${row.route}`)
    expect(keys.length).toBe(new Set(keys).size)
  })
})

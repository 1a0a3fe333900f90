// GET /api/templates and /api/templates/[name]: the loop templates of sheets/, served from the
// built app's bundled server assets, only to signed-in people; and every template computes.
import { readFileSync, readdirSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { Client, demo, signedIn } from './support/client'

const sheetsDir = new URL('../../sheets/', import.meta.url)
const names = readdirSync(sheetsDir)
  .filter((file) => file.endsWith('.json'))
  .map((file) => file.slice(0, -'.json'.length))
  .sort()
const read = (name: string) => JSON.parse(readFileSync(new URL(`${name}.json`, sheetsDir), 'utf8'))

describe('loop templates', () => {
  it('lists every file of sheets/ with its title to a signed-in engineer', async () => {
    const engineer = await signedIn(demo.engineer)
    const answer = await engineer.get('/api/templates')
    expect(answer.status).toBe(200)
    expect(names.length).toBeGreaterThan(0)
    expect(answer.body).toEqual(names.map((name) => ({ name, title: read(name).title })))
  })

  it('answers one template with the loop file as stored', async () => {
    const checker = await signedIn(demo.checker)
    const answer = await checker.get(`/api/templates/${names[0]}`)
    expect(answer.status).toBe(200)
    expect(answer.body).toEqual(read(names[0]!))
  })

  it('refuses signed-out requests with 401', async () => {
    expect((await new Client().get('/api/templates')).status).toBe(401)
    expect((await new Client().get(`/api/templates/${names[0]}`)).status).toBe(401)
  })

  it('answers 404 for an unknown template and 400 for a name that is no file name', async () => {
    const engineer = await signedIn(demo.engineer)
    expect((await engineer.get('/api/templates/no-such-loop')).status).toBe(404)
    expect((await engineer.get('/api/templates/..%2Fpackage')).status).toBe(400)
  })

  // Every template is a starting point for a real sheet, so each must compute; all four shipped today are stable
  // (the engine's verdict, held against its own pole list: every pole with Re < 0, none counted by Routh).
  it.each(names)('computes %s through /api/calculate without error, stable', async (name) => {
    const engineer = await signedIn(demo.engineer)
    const template = (await engineer.get(`/api/templates/${name}`)).body
    const answer = await engineer.post('/api/calculate', template)
    expect(answer.status).toBe(200)
    expect(answer.body.stability).toBe('stable')
    expect(answer.body.poles.every((pole: { re: number }) => pole.re < 0)).toBe(true)
    expect(answer.body.routh.sign_changes).toBe(0)
    expect(answer.body.steps.length).toBeGreaterThan(0)
  })
})

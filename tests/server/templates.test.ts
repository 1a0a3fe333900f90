// GET /api/templates and /api/templates/[name]: the sheet templates of sheets/, served from the
// built app's bundled server assets, only to signed-in people; every template is a whole, valid sheet document
// whose every parameter names its source, and every template computes.
import { readFileSync, readdirSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { Client, demo, signedIn } from './support/client'
import { loopFileOf } from '../../shared/schemas/sheet'
import { sheetTemplateSchema } from '../../shared/schemas/sheets'

const sheetsDir = new URL('../../sheets/', import.meta.url)
const names = readdirSync(sheetsDir)
  .filter((file) => file.endsWith('.json'))
  .map((file) => file.slice(0, -'.json'.length))
  .sort()
const read = (name: string) => JSON.parse(readFileSync(new URL(`${name}.json`, sheetsDir), 'utf8'))

describe('sheet templates', () => {
  it('lists every file of sheets/ with its title and loop tag to a signed-in engineer', async () => {
    const engineer = await signedIn(demo.engineer)
    const answer = await engineer.get('/api/templates')
    expect(answer.status).toBe(200)
    expect(names).toEqual(['cascade-loop', 'dead-time-flow-loop', 'integrating-level-loop', 'lead-motor-speed-loop', 'pi-pressure-loop'])
    expect(answer.body).toEqual(names.map((name) => ({ name, title: read(name).title, loopTag: read(name).loopTag })))
  })

  it.each(names)('holds %s as a whole sheet document: valid, scoped, every parameter described and sourced', (name) => {
    const checked = sheetTemplateSchema.safeParse(read(name))
    expect(checked.success ? [] : checked.error.issues).toEqual([])
    const { document } = checked.data!
    expect(document.scope.length).toBeGreaterThan(40)
    expect(document.assumptions.length).toBeGreaterThan(0)
    expect(document.references.length).toBeGreaterThan(0)
    expect(document.parameters.map((p) => p.symbol)).toEqual(Object.keys(document.loop.parameters))
    for (const parameter of document.parameters) {
      expect(parameter.description, parameter.symbol).not.toBe('')
      expect(parameter.source, parameter.symbol).not.toBe('')
    }
    expect(document.blockOrder).toEqual(Object.keys(document.loop.blocks))
  })

  it('has a lead-compensated motor speed loop: a compensator block whose zero lies below its pole', () => {
    const { document } = read('lead-motor-speed-loop')
    const lead = Object.values(document.loop.blocks as Record<string, { role: string; num: string; den: string }>).find((block) => block.role === 'compensator')!
    expect(lead).toMatchObject({ num: 'Tld*s + 1', den: 'alpha*Tld*s + 1' })
    // A lead network (T s + 1)/(α T s + 1) needs 0 < α < 1 (common practice).
    expect(document.loop.parameters.alpha.value).toBeGreaterThan(0)
    expect(document.loop.parameters.alpha.value).toBeLessThan(1)
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

  // Every template is a starting point for a real sheet, so each must compute; all five shipped today are stable
  // (the engine's verdict, held against its own pole list: every pole with Re < 0, none counted by Routh).
  it.each(names)('computes %s through /api/calculate without error, stable', async (name) => {
    const engineer = await signedIn(demo.engineer)
    const template = (await engineer.get(`/api/templates/${name}`)).body
    const answer = await engineer.post('/api/calculate', loopFileOf(template.document))
    expect(answer.status).toBe(200)
    expect(answer.body.stability).toBe('stable')
    expect(answer.body.poles.every((pole: { re: number }) => pole.re < 0)).toBe(true)
    expect(answer.body.routh.sign_changes).toBe(0)
    expect(answer.body.steps.length).toBeGreaterThan(0)
  })
})

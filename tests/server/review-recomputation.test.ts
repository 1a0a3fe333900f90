// The checker's recomputation (issue 8, item 5): the stored document computed again by the engine as it is now,
// against the result the engineer saved. An older engine is simulated by writing the stored result by SQL.
import { beforeAll, describe, expect, it } from 'vitest'
import { formatNumber } from '../../app/utils/format'
import { ENGINE_VERSION } from '../../shared/calc/version'
import { database } from './support/client'
import { newSheet, setStatus, theCast, type Cast } from './support/sheets'

let cast: Cast

beforeAll(async () => {
  cast = await theCast()
})

async function sheetInCheck() {
  const made = await newSheet(cast.engineer, cast.demoProjectId, { title: 'Booster discharge pressure, recomputed', loopTag: 'PIC-214-01', template: 'pi-pressure-loop' })
  await setStatus(made.id, 'in check')
  return made.detail.revision.id as number
}

describe('the recomputation', () => {
  it('agrees with a result the engine of today saved', async () => {
    const revisionId = await sheetInCheck()
    const answer = await cast.checker.get(`/api/revisions/${revisionId}/recomputation`)
    expect(answer.status).toBe(200)
    expect(answer.body).toMatchObject({ agrees: true, differences: [], refusal: null, stored: { engineVersion: ENGINE_VERSION, present: true }, now: { engineVersion: ENGINE_VERSION } })
  })

  it('names each figure, verdict and warning that an older engine saved differently', async () => {
    const revisionId = await sheetInCheck()
    const [before] = await database()`select result from sheet_revisions where id = ${revisionId}`
    const truth = before!.result
    await database()`update sheet_revisions set engine_version = '0.9.0',
      result = jsonb_set(jsonb_set(jsonb_set(result, '{margins,phase_margin_deg}', '12.5'), '{stability}', '"unstable"'),
        '{warnings}', (result->'warnings') || '["an old engine’s warning"]'::jsonb)
      where id = ${revisionId}`
    const answer = await cast.checker.get(`/api/revisions/${revisionId}/recomputation`)
    expect(answer.status).toBe(200)
    const body = answer.body
    expect(body.agrees).toBe(false)
    expect(body.stored.engineVersion).toBe('0.9.0')
    expect(body.now.engineVersion).toBe(ENGINE_VERSION)
    expect(body.differences).toEqual(
      expect.arrayContaining([
        { kind: 'figure', quantity: 'margins.phase_margin_deg', label: 'Phase margin', before: '12.5°', after: formatNumber(truth.margins.phase_margin_deg, { unit: '°' }) },
        { kind: 'verdict', quantity: 'stability', label: 'Stability', before: 'unstable', after: truth.stability },
        { kind: 'warning', quantity: 'warnings', label: 'Warning', before: 'an old engine’s warning', after: null },
      ]),
    )
    expect(body.differences).toHaveLength(3)
  })

  it('a difference within rounding is none', async () => {
    const revisionId = await sheetInCheck()
    const [row] = await database()`select result from sheet_revisions where id = ${revisionId}`
    const nudged = row!.result.margins.phase_margin_deg * (1 + 1e-9)
    await database()`update sheet_revisions set result = jsonb_set(result, '{margins,phase_margin_deg}', to_jsonb(${nudged}::float8)) where id = ${revisionId}`
    const answer = await cast.checker.get(`/api/revisions/${revisionId}/recomputation`)
    expect(answer.body.differences).toEqual([])
    expect(answer.body.agrees).toBe(true)
  })

  it('is refused to clients and to outsiders (403)', async () => {
    const revisionId = await sheetInCheck()
    expect((await cast.client.get(`/api/revisions/${revisionId}/recomputation`)).status).toBe(403)
    expect((await cast.outsider.get(`/api/revisions/${revisionId}/recomputation`)).status).toBe(403)
  })
})

// A fitted plant and a tuning rule put into the sheet form (app/utils/fieldModels.ts), outside the browser: the
// dosing-flow template's form changed, read back through the shared schema, and computed by the engine.
import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { evaluateLoop } from '../../shared/calc'
import { tune } from '../../shared/calc/tuning'
import { loopFileOf } from '../../shared/schemas/sheet'
import { applyTuning, controllerFormOf, fopdtBlocks, insertPlantModel, modelOfBlock } from '../../app/utils/fieldModels'
import { documentOfForm, formOfDocument, type SheetForm } from '../../app/utils/sheetForm'

const template = JSON.parse(readFileSync(new URL('../../sheets/dead-time-flow-loop.json', import.meta.url), 'utf8'))
const dosingForm = (): SheetForm => formOfDocument(template.document, template.title, template.loopTag)
const citation = { attachmentName: 'line-3.csv', sha256: 'ab'.repeat(32), method: 'least squares' as const, outputUnit: '%', processUnit: '%' }
const parameter = (form: SheetForm, symbol: string) => form.parameters.find((p) => p.symbol === symbol)!
const computed = (form: SheetForm) => {
  const reading = documentOfForm(form)
  expect(reading.problems).toEqual({})
  return evaluateLoop(loopFileOf(reading.valid!))
}

describe('a fitted plant into the form', () => {
  it('recognises the template\'s plant block and puts the fit into it, citing the upload, the band kept relative', () => {
    const form = dosingForm()
    expect(fopdtBlocks(form)).toEqual([{ id: 'P', gain: 'Kp', timeConstant: 'T', deadTime: 'L' }])
    const { form: next, blockId } = insertPlantModel(form, { gain: 2.8, timeConstant: 7.5, deadTime: 2.5 }, citation, 'P')
    expect(blockId).toBe('P')
    // Kp 1.4 in [1.2, 1.6] becomes 2.8 in [2.4, 3.2]; L 2 in [1.6, 2.4] becomes 2.5 in [2, 3].
    expect(parameter(next, 'Kp')).toMatchObject({ value: '2.8', min: '2.4', max: '3.2' })
    expect(parameter(next, 'L')).toMatchObject({ value: '2.5', min: '2', max: '3' })
    expect(parameter(next, 'T').source).toBe('Fitted by least squares on the step response from the step test line-3.csv (SHA-256 abababababab), attached to this sheet')
    expect(modelOfBlock(next, fopdtBlocks(next)[0]!)).toEqual({ gain: 2.8, timeConstant: 7.5, deadTime: 2.5 })
    expect(computed(next).open_loop?.delay_s).toBe(2.5)
  })

  it('adds a new plant block with its own parameters when asked', () => {
    const { form: next, blockId } = insertPlantModel(dosingForm(), { gain: 0.9, timeConstant: 3, deadTime: 1 }, citation, null)
    expect(blockId).toBe('G')
    expect(next.blocks.at(-1)).toEqual({ id: 'G', role: 'plant', label: 'Process fitted from line-3.csv', num: 'Kp2', den: 'Tp*s + 1', delay: 'Lp' })
    expect(parameter(next, 'Kp2')).toMatchObject({ value: '0.9', unit: '%/%' })
    expect(documentOfForm(next).problems).toEqual({})
  })
})

describe('a tuning rule into the controller block', () => {
  it('sets the PI block\'s values with the rule as source, and the loop computes with them', () => {
    const form = dosingForm()
    expect(controllerFormOf(form.blocks[0]!)).toEqual({ id: 'C', gain: 'Kc', integralTime: 'Ti', derivativeTime: null })
    const model = modelOfBlock(form, fopdtBlocks(form)[0]!)!
    const simc = tune({ rule: 'simc-pi', model })
    const next = applyTuning(form, 'C', simc, 'SIMC PI for P')
    // τ = 6, θ = 2, K = 1.4, τc = θ: Kc = 6/(1.4·4) = 1.071, Ti = min(6, 16) = 6 (Skogestad 2003).
    expect(parameter(next, 'Kc')).toMatchObject({ value: String(Number((6 / 5.6).toPrecision(6))), source: 'SIMC PI for P' })
    expect(parameter(next, 'Ti').value).toBe('6')
    expect(next.blocks[0]).toMatchObject({ num: 'Kc*(Ti*s + 1)', den: 'Ti*s' })
    const before = computed(form).margins!.phase_margin_deg!
    const after = computed(next).margins!.phase_margin_deg!
    expect(after).not.toBeCloseTo(before, 1)
  })

  it('rewrites the block to the ideal PID form with a new Td, and back to PI without it', () => {
    const form = dosingForm()
    const model = modelOfBlock(form, fopdtBlocks(form)[0]!)!
    const pid = applyTuning(form, 'C', tune({ rule: 'zn-pid', model }), 'Ziegler–Nichols PID for P')
    expect(pid.blocks[0]).toMatchObject({ num: 'Kc*(Ti*Td*s^2 + Ti*s + 1)', den: 'Ti*s' })
    expect(controllerFormOf(pid.blocks[0]!)).toEqual({ id: 'C', gain: 'Kc', integralTime: 'Ti', derivativeTime: 'Td' })
    expect(parameter(pid, 'Td')).toMatchObject({ unit: 's', source: 'Ziegler–Nichols PID for P' })
    expect(computed(pid).stability).toBe('stable')
    const pi = applyTuning(pid, 'C', tune({ rule: 'lambda-pi', model, closedLoopTimeConstant: 6 }), 'lambda PI for P')
    expect(pi.blocks[0]).toMatchObject({ num: 'Kc*(Ti*s + 1)', den: 'Ti*s' })
    expect(pi.parameters.some((p) => p.symbol === 'Td')).toBe(false)
    expect(documentOfForm(pi).problems).toEqual({})
  })
})

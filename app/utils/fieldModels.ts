// The sheet form and the field-data panels (issue 10): a fitted first-order-plus-dead-time model put into a plant
// block with the upload cited as its parameters' source, and a tuning rule's settings put into the controller block
// with a note naming the rule. Pure functions of the form (app/utils/sheetForm.ts), so the page applies them with one
// replaceForm and the autosave records them like any edit.
import type { FopdtModel } from '#shared/calc/step-fit'
import type { TuningResult } from '#shared/calc/tuning'
import { shortHash } from '#shared/schemas/attachments'
import { plainCopy, type FormBlock, type FormParameter, type SheetForm } from './sheetForm'

const SYMBOL = /^[A-Za-z][A-Za-z0-9_]*$/

/** A plant block of the form K/(T*s + 1) with dead time L, each a parameter symbol: the symbols, or null. */
export interface FopdtBlock {
  id: string
  gain: string
  timeConstant: string
  deadTime: string | null
}

function compact(text: string): string {
  return text.replace(/\s+/g, '')
}

export function fopdtBlockOf(block: FormBlock): FopdtBlock | null {
  const num = compact(block.num)
  const den = /^([A-Za-z][A-Za-z0-9_]*)\*s\+1$/.exec(compact(block.den))
  const delay = compact(block.delay)
  if (!SYMBOL.test(num) || !den || (delay !== '' && !SYMBOL.test(delay))) return null
  return { id: block.id, gain: num, timeConstant: den[1]!, deadTime: delay === '' ? null : delay }
}

/** Every plant block of that form whose symbols are parameters with numbers. */
export function fopdtBlocks(form: SheetForm): FopdtBlock[] {
  const known = new Set(form.parameters.map((p) => p.symbol))
  return form.blocks
    .filter((b) => b.role === 'plant')
    .map(fopdtBlockOf)
    .filter((b): b is FopdtBlock => b !== null && known.has(b.gain) && known.has(b.timeConstant) && (b.deadTime === null || known.has(b.deadTime)))
}

/** The model a FOPDT block holds at its parameters' values, or null while one of them does not read as a number. */
export function modelOfBlock(form: SheetForm, block: FopdtBlock): FopdtModel | null {
  const value = (symbol: string | null) => {
    if (symbol === null) return 0
    const text = form.parameters.find((p) => p.symbol === symbol)?.value.trim() ?? ''
    const number = Number(text)
    return text !== '' && Number.isFinite(number) ? number : null
  }
  const gain = value(block.gain)
  const timeConstant = value(block.timeConstant)
  const deadTime = value(block.deadTime)
  if (gain === null || timeConstant === null || deadTime === null) return null
  return { gain, timeConstant, deadTime }
}

/** A number as a parameter's value: 6 significant figures, plain text the form's number reader takes. */
export function valueText(x: number): string {
  return String(Number(x.toPrecision(6)))
}

function freeName(taken: Set<string>, base: string): string {
  if (!taken.has(base)) return base
  for (let n = 2; ; n++) if (!taken.has(`${base}${n}`)) return `${base}${n}`
}

/** A parameter's value set; a tolerance band it had keeps its width relative to the value. */
function withValue(parameter: FormParameter, value: number, source: string): FormParameter {
  const old = Number(parameter.value)
  const scaled = (bound: string) => {
    const b = Number(bound)
    if (bound.trim() === '' || !Number.isFinite(b) || !Number.isFinite(old) || old === 0) return ''
    return valueText((b / old) * value)
  }
  let min = scaled(parameter.min)
  let max = scaled(parameter.max)
  // A value of the other sign turns the band over.
  if (min !== '' && max !== '' && Number(min) > Number(max)) [min, max] = [max, min]
  return { ...parameter, value: valueText(value), min, max, source }
}

export interface FitCitation {
  attachmentName: string
  sha256: string
  method: 'two-point' | 'least squares'
  outputUnit: string
  processUnit: string | null
}

export function fitSource(citation: FitCitation): string {
  const method = citation.method === 'two-point' ? 'the 28.3 %/63.2 % two-point method' : 'least squares on the step response'
  return `Fitted by ${method} from the step test ${citation.attachmentName} (SHA-256 ${shortHash(citation.sha256)}), attached to this sheet`
}

/**
 * The fitted model into the form: into the FOPDT plant block named by `target` (its parameters' values and sources
 * replaced), or a new plant block K/(T*s + 1) with dead time L with new parameters, left out of the structure for the
 * engineer to place. Answers the new form and the id of the block.
 */
export function insertPlantModel(form: SheetForm, model: FopdtModel, citation: FitCitation, target: string | null): { form: SheetForm; blockId: string } {
  const next = plainCopy(form)
  const source = fitSource(citation)
  const existing = target === null ? null : fopdtBlocks(next).find((b) => b.id === target) ?? null
  if (existing) {
    const set = (symbol: string, value: number) => {
      const i = next.parameters.findIndex((p) => p.symbol === symbol)
      next.parameters[i] = withValue(next.parameters[i]!, value, source)
    }
    set(existing.gain, model.gain)
    set(existing.timeConstant, model.timeConstant)
    if (existing.deadTime) set(existing.deadTime, model.deadTime)
    else if (model.deadTime > 0) {
      const symbol = freeName(new Set(next.parameters.map((p) => p.symbol)), 'L')
      next.parameters.push({ symbol, description: 'Process dead time', value: valueText(model.deadTime), unit: 's', min: '', max: '', source, tex: '\\theta' })
      next.blocks.find((b) => b.id === existing.id)!.delay = symbol
    }
    return { form: next, blockId: existing.id }
  }
  const symbols = new Set(next.parameters.map((p) => p.symbol))
  const gain = freeName(symbols, 'Kp')
  symbols.add(gain)
  const timeConstant = freeName(symbols, 'Tp')
  symbols.add(timeConstant)
  const deadTime = freeName(symbols, 'Lp')
  const gainUnit = citation.processUnit ? `${citation.processUnit}/${citation.outputUnit}` : `1/${citation.outputUnit}`
  next.parameters.push(
    { symbol: gain, description: 'Process gain, fitted from the step test', value: valueText(model.gain), unit: gainUnit, min: '', max: '', source, tex: 'K_p' },
    { symbol: timeConstant, description: 'Process time constant, fitted from the step test', value: valueText(model.timeConstant), unit: 's', min: '', max: '', source, tex: '\\tau_p' },
    { symbol: deadTime, description: 'Process dead time, fitted from the step test', value: valueText(model.deadTime), unit: 's', min: '', max: '', source, tex: '\\theta_p' },
  )
  const blockId = freeName(new Set(next.blocks.map((b) => b.id)), 'G')
  next.blocks.push({ id: blockId, role: 'plant', label: `Process fitted from ${citation.attachmentName}`, num: gain, den: `${timeConstant}*s + 1`, delay: deadTime })
  return { form: next, blockId }
}

/** A controller block in the sheet's ideal form: Kc*(Ti*s + 1) over Ti*s (PI), Kc*(Ti*Td*s^2 + Ti*s + 1) over Ti*s (PID). */
export interface ControllerForm {
  id: string
  gain: string
  integralTime: string
  derivativeTime: string | null
}

export function controllerFormOf(block: FormBlock): ControllerForm | null {
  const num = compact(block.num)
  const den = /^([A-Za-z][A-Za-z0-9_]*)\*s$/.exec(compact(block.den))
  if (!den) return null
  const ti = den[1]!
  const pi = new RegExp(`^([A-Za-z][A-Za-z0-9_]*)\\*\\(${ti}\\*s\\+1\\)$`).exec(num)
  if (pi) return { id: block.id, gain: pi[1]!, integralTime: ti, derivativeTime: null }
  const pid = new RegExp(`^([A-Za-z][A-Za-z0-9_]*)\\*\\(${ti}\\*([A-Za-z][A-Za-z0-9_]*)\\*s\\^2\\+${ti}\\*s\\+1\\)$`).exec(num)
  if (pid) return { id: block.id, gain: pid[1]!, integralTime: ti, derivativeTime: pid[2]! }
  return null
}

export function ruleNote(result: TuningResult, plantId: string, model: FopdtModel): string {
  const lambda = result.closedLoopTimeConstant === null ? '' : `, ${result.rule === 'lambda-pi' ? 'λ' : 'τc'} = ${valueText(result.closedLoopTimeConstant)} s`
  return `${result.name} tuning (${result.source}) for plant ${plantId}: K = ${valueText(model.gain)}, τ = ${valueText(model.timeConstant)} s, θ = ${valueText(model.deadTime)} s${lambda}`
}

/**
 * The rule's settings into the controller block: its numerator and denominator rewritten in the ideal PI or PID form
 * (the symbols it had are kept; a derivative time Td added for PID, dropped for PI), the parameters' values set, and
 * each parameter's source the note naming the rule.
 */
export function applyTuning(form: SheetForm, controllerId: string, result: TuningResult, note: string): SheetForm {
  const next = plainCopy(form)
  const block = next.blocks.find((b) => b.id === controllerId)
  if (!block) return next
  const known = controllerFormOf(block)
  const symbols = new Set(next.parameters.map((p) => p.symbol))
  const gain = known?.gain ?? freeName(symbols, 'Kc')
  symbols.add(gain)
  const integral = known?.integralTime ?? freeName(symbols, 'Ti')
  symbols.add(integral)
  const derivative = result.controller === 'PID' ? known?.derivativeTime ?? freeName(symbols, 'Td') : null
  const put = (symbol: string, value: number, description: string, unit: string, tex: string) => {
    const i = next.parameters.findIndex((p) => p.symbol === symbol)
    if (i >= 0) next.parameters[i] = withValue(next.parameters[i]!, value, note)
    else next.parameters.push({ symbol, description, value: valueText(value), unit, min: '', max: '', source: note, tex })
  }
  put(gain, result.settings.gain, 'Controller proportional gain', '%/%', 'K_c')
  put(integral, result.settings.integralTime, 'Controller integral time', 's', 'T_i')
  if (derivative) put(derivative, result.settings.derivativeTime!, 'Controller derivative time', 's', 'T_d')
  block.num = derivative ? `${gain}*(${integral}*${derivative}*s^2 + ${integral}*s + 1)` : `${gain}*(${integral}*s + 1)`
  block.den = `${integral}*s`
  // A derivative time the PI form no longer uses leaves the parameter table with it (the schema refuses none, but an unused row misleads).
  if (!derivative && known?.derivativeTime) {
    const unused = known.derivativeTime
    const elsewhere = next.blocks.some((b) => [b.num, b.den, b.delay].some((text) => new RegExp(`\\b${unused}\\b`).test(text)))
    if (!elsewhere) next.parameters = next.parameters.filter((p) => p.symbol !== unused)
  }
  return next
}

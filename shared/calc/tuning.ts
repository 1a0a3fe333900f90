import type { FopdtModel } from './step-fit'
import { stabilityMargins } from './margins'
import type { Complex, OpenLoop } from './types'

/**
 * PI and PID settings for a first-order-plus-dead-time plant
 * G(s) = K·e^(−θs)/(τs + 1) by named published rules. Every answer is in the
 * controller form the sheet's controller blocks use (the templates' PI block
 * is `Kc*(Ti*s + 1)` over `Ti*s`):
 *
 *     PI:  C(s) = Kc·(1 + 1/(Ti·s))           = Kc·(Ti·s + 1)/(Ti·s)
 *     PID: C(s) = Kc·(1 + 1/(Ti·s) + Td·s)    = Kc·(Ti·Td·s² + Ti·s + 1)/(Ti·s)
 *
 * (the ideal, or parallel ISA, form). A rule published for the series form
 * Kc·(1 + 1/(τI·s))·(1 + τD·s) is converted: Kc' = Kc·(1 + τD/τI),
 * Ti = τI + τD, Td = τI·τD/(τI + τD) (common practice; Åström and Hägglund,
 * Advanced PID Control, ISA, 2006, ch. 3, from memory), and the answer says so.
 * A negative plant gain (reverse acting) gives a negative Kc, so that the loop
 * stays negative feedback as the sheet's structure draws it.
 */

export const tuningRules = ['simc-pi', 'simc-pid', 'lambda-pi', 'zn-pi', 'zn-pid'] as const
export type TuningRule = (typeof tuningRules)[number]

export interface TuningRequest {
  rule: TuningRule
  model: FopdtModel
  /** τc of SIMC (default θ, the paper's choice for tight control) or λ of lambda tuning (required). */
  closedLoopTimeConstant?: number
}

export interface ControllerSettings {
  /** Kc, in % of output per unit of process value. */
  gain: number
  /** Ti, s. */
  integralTime: number
  /** Td, s; null for PI. */
  derivativeTime: number | null
}

export interface TuningResult {
  rule: TuningRule
  name: string
  controller: 'PI' | 'PID'
  settings: ControllerSettings
  /** The rule's formulas, TeX for KaTeX. */
  formulaTex: string
  /** The published source, as a reference list gives it. */
  source: string
  /** τc or λ used, s (null for Ziegler–Nichols). */
  closedLoopTimeConstant: number | null
  /** The ultimate gain and period the rule started from (Ziegler–Nichols only). */
  ultimate: { gain: number; period: number; frequency: number } | null
  /** Conversions and choices made, as plain sentences. */
  notes: string[]
}

export class TuningError extends Error {
  readonly field: string
  constructor(field: string, message: string) {
    super(message)
    this.name = 'TuningError'
    this.field = field
  }
}

export const tuningRuleNames: Record<TuningRule, string> = {
  'simc-pi': 'SIMC PI',
  'simc-pid': 'SIMC PID (derivative θ/3)',
  'lambda-pi': 'Lambda (IMC-based) PI',
  'zn-pi': 'Ziegler–Nichols ultimate-cycle PI',
  'zn-pid': 'Ziegler–Nichols ultimate-cycle PID',
}

const SIMC_SOURCE = 'S. Skogestad, "Simple analytic rules for model reduction and PID controller tuning", Journal of Process Control 13 (2003) 291–309'
const ISIMC_SOURCE = 'S. Skogestad and C. Grimholt, "The SIMC method for smooth PID controller tuning", in R. Vilanova and A. Visioli (eds.), PID Control in the Third Millennium, Springer, 2012 (the θ/3 derivative for a first-order plant with dead time; from memory)'
const LAMBDA_SOURCE = 'Lambda tuning (E. B. Dahlin, 1968; D. E. Rivera, M. Morari and S. Skogestad, "Internal model control. 4. PID controller design", Ind. Eng. Chem. Process Des. Dev. 25 (1986) 252–265), as given in K. J. Åström and T. Hägglund, Advanced PID Control, ISA, 2006 (from memory)'
const ZN_SOURCE = 'J. G. Ziegler and N. B. Nichols, "Optimum settings for automatic controllers", Transactions of the ASME 64 (1942) 759–768'

function checkModel(model: FopdtModel): void {
  if (!Number.isFinite(model.gain) || model.gain === 0) throw new TuningError('model.gain', 'the plant gain must be a non-zero number')
  if (!Number.isFinite(model.timeConstant) || model.timeConstant <= 0) throw new TuningError('model.timeConstant', 'the time constant must be a positive number of seconds')
  if (!Number.isFinite(model.deadTime) || model.deadTime < 0) throw new TuningError('model.deadTime', 'the dead time must be zero or a positive number of seconds')
}

/** Series form Kc(1 + 1/(τI s))(1 + τD s) → ideal form Kc(1 + 1/(Ti s) + Td s). */
export function seriesToIdeal(gain: number, integralTime: number, derivativeTime: number): ControllerSettings {
  return {
    gain: gain * (1 + derivativeTime / integralTime),
    integralTime: integralTime + derivativeTime,
    derivativeTime: (integralTime * derivativeTime) / (integralTime + derivativeTime),
  }
}

/**
 * Ultimate gain and period of the plant under proportional control: where
 * G(jω) first crosses −180° with the dead time exact (the engine's margin
 * search, margins.ts), Ku = 1/|G(jωu)| and Pu = 2π/ωu. Null without dead
 * time (a first-order lag never reaches −180°).
 */
export function ultimateCycle(model: FopdtModel): { gain: number; period: number; frequency: number } | null {
  const k = Math.abs(model.gain)
  const tau = model.timeConstant
  const theta = model.deadTime
  const openLoop: OpenLoop = {
    num: [k],
    den: [tau, 1],
    delay_s: theta,
    at: (s: Complex) => {
      // k·e^(−sθ)/(τs + 1)
      const er = Math.exp(-s.re * theta)
      const dr = er * Math.cos(-s.im * theta)
      const di = er * Math.sin(-s.im * theta)
      const qr = tau * s.re + 1
      const qi = tau * s.im
      const q = qr * qr + qi * qi
      return { re: (k * (dr * qr + di * qi)) / q, im: (k * (di * qr - dr * qi)) / q }
    },
  }
  // The first crossing, lowest in frequency: proportional gain past 1/|G| there starts the cycle. (The margin the
  // sheet reports is the smallest in magnitude over all crossings, which for a gain above 1 can be a later one.)
  const frequency = stabilityMargins(openLoop).crossings.phase[0]
  if (frequency === undefined) return null
  const value = openLoop.at({ re: 0, im: frequency })
  return { gain: 1 / Math.hypot(value.re, value.im), period: (2 * Math.PI) / frequency, frequency }
}

export function tune(request: TuningRequest): TuningResult {
  const { rule, model } = request
  checkModel(model)
  const { gain: k, timeConstant: tau, deadTime: theta } = model
  const notes: string[] = []
  if (k < 0) notes.push('The plant gain is negative (reverse acting): the controller gain is negative too, so the loop stays negative feedback.')
  const chosen = request.closedLoopTimeConstant
  if (chosen !== undefined && (!Number.isFinite(chosen) || chosen <= 0)) throw new TuningError('closedLoopTimeConstant', 'the closed-loop time constant must be a positive number of seconds')

  if (rule === 'simc-pi' || rule === 'simc-pid') {
    // SIMC (Skogestad 2003, eq. (27)–(28) of the paper for a first-order plant with dead time, numbering from memory):
    // Kc = τ/(K(τc + θ)), τI = min(τ, 4(τc + θ)); τc = θ recommended for tight, robust control.
    const tauC = chosen ?? theta
    if (tauC <= 0) throw new TuningError('closedLoopTimeConstant', 'the plant has no dead time, so τc cannot default to θ: give the closed-loop time constant')
    if (chosen === undefined) notes.push(`τc = θ = ${tidy(theta)} s, the paper's choice for tight control with good robustness.`)
    if (rule === 'simc-pi') {
      const integralTime = Math.min(tau, 4 * (tauC + theta))
      return {
        rule,
        name: tuningRuleNames[rule],
        controller: 'PI',
        settings: { gain: tau / (k * (tauC + theta)), integralTime, derivativeTime: null },
        formulaTex: String.raw`K_c = \frac{1}{K}\,\frac{\tau}{\tau_c + \theta}, \qquad T_i = \min\{\tau,\; 4(\tau_c + \theta)\}`,
        source: SIMC_SOURCE,
        closedLoopTimeConstant: tauC,
        ultimate: null,
        notes,
      }
    }
    // Series-form PID with τD = θ/3 (the "improved" SIMC for a first-order plant with dead time), converted to the ideal form.
    if (theta === 0) throw new TuningError('model.deadTime', 'the θ/3 derivative needs a dead time: without one use SIMC PI')
    const seriesGain = (tau + theta / 3) / (k * (tauC + theta))
    const seriesIntegral = Math.min(tau + theta / 3, 4 * (tauC + theta))
    const seriesDerivative = theta / 3
    notes.push(
      `Published in the series form Kc(1 + 1/(τI s))(1 + τD s): Kc = ${tidy(seriesGain)}, τI = ${tidy(seriesIntegral)} s, τD = ${tidy(seriesDerivative)} s; converted to the sheet's ideal form.`,
    )
    return {
      rule,
      name: tuningRuleNames[rule],
      controller: 'PID',
      settings: seriesToIdeal(seriesGain, seriesIntegral, seriesDerivative),
      formulaTex: String.raw`\begin{gathered} K_c' = \frac{1}{K}\,\frac{\tau + \theta/3}{\tau_c + \theta},\quad \tau_I = \min\{\tau + \tfrac{\theta}{3},\; 4(\tau_c + \theta)\},\quad \tau_D = \frac{\theta}{3} \\ K_c = K_c'\Big(1 + \frac{\tau_D}{\tau_I}\Big),\quad T_i = \tau_I + \tau_D,\quad T_d = \frac{\tau_I \tau_D}{\tau_I + \tau_D} \end{gathered}`,
      source: `${ISIMC_SOURCE}; after ${SIMC_SOURCE}`,
      closedLoopTimeConstant: tauC,
      ultimate: null,
      notes,
    }
  }

  if (rule === 'lambda-pi') {
    if (chosen === undefined) throw new TuningError('closedLoopTimeConstant', 'lambda tuning needs the closed-loop time constant λ you choose (commonly τ to 3τ)')
    // The integral time cancels the plant's lag; λ sets the closed loop's first-order time constant.
    return {
      rule,
      name: tuningRuleNames[rule],
      controller: 'PI',
      settings: { gain: tau / (k * (chosen + theta)), integralTime: tau, derivativeTime: null },
      formulaTex: String.raw`K_c = \frac{1}{K}\,\frac{\tau}{\lambda + \theta}, \qquad T_i = \tau`,
      source: LAMBDA_SOURCE,
      closedLoopTimeConstant: chosen,
      ultimate: null,
      notes,
    }
  }

  // Ziegler–Nichols 1942, ultimate-cycle (closed-loop) method, from the engine's −180° crossing of the model.
  const ultimate = ultimateCycle(model)
  if (!ultimate) throw new TuningError('model.deadTime', 'the plant never reaches −180° of phase (no dead time), so it has no ultimate gain: Ziegler–Nichols does not apply')
  const sign = Math.sign(k)
  notes.push(`Ultimate gain Ku = ${tidy(ultimate.gain)} and period Pu = ${tidy(ultimate.period)} s, where the model with its exact dead time crosses −180° (ω = ${tidy(ultimate.frequency)} rad/s).`)
  if (rule === 'zn-pi') {
    return {
      rule,
      name: tuningRuleNames[rule],
      controller: 'PI',
      settings: { gain: sign * 0.45 * ultimate.gain, integralTime: ultimate.period / 1.2, derivativeTime: null },
      formulaTex: String.raw`K_c = 0.45\,K_u, \qquad T_i = \frac{P_u}{1.2}`,
      source: ZN_SOURCE,
      closedLoopTimeConstant: null,
      ultimate,
      notes,
    }
  }
  notes.push('Applied in the ideal form, as the rule is commonly stated (the 1942 paper predates the distinction).')
  return {
    rule,
    name: tuningRuleNames[rule],
    controller: 'PID',
    settings: { gain: sign * 0.6 * ultimate.gain, integralTime: ultimate.period / 2, derivativeTime: ultimate.period / 8 },
    formulaTex: String.raw`K_c = 0.6\,K_u, \qquad T_i = \frac{P_u}{2}, \qquad T_d = \frac{P_u}{8}`,
    source: ZN_SOURCE,
    closedLoopTimeConstant: null,
    ultimate,
    notes,
  }
}

function tidy(x: number): string {
  return String(Number(x.toPrecision(4)))
}

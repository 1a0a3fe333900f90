import katex from 'katex'
import { describe, expect, it } from 'vitest'
import { TuningError, seriesToIdeal, tune, tuningRules, ultimateCycle } from '#shared/calc/tuning'

const relative = (actual: number, expected: number) => Math.abs(actual / expected - 1)

/**
 * The ultimate frequency of K·e^(−θs)/(τs + 1) solves atan(ωτ) + ωθ = π, and
 * Ku = √(1 + (ωu·τ)²)/K (the phase and magnitude of the model, common
 * practice): solved here by plain bisection, independently of the engine's
 * margin search that tuning.ts uses.
 */
function ultimateByBisection(k: number, tau: number, theta: number): { gain: number; period: number } {
  let lo = 1e-9
  let hi = Math.PI / theta
  for (let i = 0; i < 200; i++) {
    const mid = (lo + hi) / 2
    if (Math.atan(mid * tau) + mid * theta < Math.PI) lo = mid
    else hi = mid
  }
  const w = (lo + hi) / 2
  return { gain: Math.sqrt(1 + (w * tau) ** 2) / k, period: (2 * Math.PI) / w }
}

describe('SIMC (Skogestad 2003)', () => {
  it('matches the paper\'s example E1: k = 1, τ = 2.5, θ = 1.47 (half rule), τc = θ gives Kc = 0.85, τI = 2.5 (values from memory)', () => {
    const result = tune({ rule: 'simc-pi', model: { gain: 1, timeConstant: 2.5, deadTime: 1.47 } })
    expect(result.settings.gain).toBeCloseTo(0.85, 2)
    expect(result.settings.integralTime).toBe(2.5)
    expect(result.settings.derivativeTime).toBeNull()
    expect(result.closedLoopTimeConstant).toBe(1.47)
    expect(result.source).toContain('Journal of Process Control 13 (2003) 291–309')
    expect(result.formulaTex).toContain(String.raw`\min\{\tau,\; 4(\tau_c + \theta)\}`)
  })

  it('takes τI = 4(τc + θ) for a lag-dominant plant (the rule\'s own switch, evaluated by hand)', () => {
    // k = 2, τ = 100, θ = 2, τc = 4: Kc = 100/(2·6) = 8.333, τI = min(100, 24) = 24.
    const result = tune({ rule: 'simc-pi', model: { gain: 2, timeConstant: 100, deadTime: 2 }, closedLoopTimeConstant: 4 })
    expect(result.settings.gain).toBeCloseTo(100 / 12, 12)
    expect(result.settings.integralTime).toBe(24)
  })

  it('gives the θ/3-derivative PID in the series form and converts it to the sheet\'s ideal form', () => {
    // k = 1, τ = 2.5, θ = 1.47, τc = θ: series Kc = (2.5 + 0.49)/2.94 = 1.01701, τI = 2.99, τD = 0.49 (by hand).
    const result = tune({ rule: 'simc-pid', model: { gain: 1, timeConstant: 2.5, deadTime: 1.47 } })
    const ideal = seriesToIdeal(2.99 / 2.94, 2.99, 0.49)
    expect(result.controller).toBe('PID')
    expect(result.settings.gain).toBeCloseTo(ideal.gain, 12)
    expect(result.settings.integralTime).toBeCloseTo(2.99 + 0.49, 12)
    expect(result.settings.derivativeTime).toBeCloseTo((2.99 * 0.49) / 3.48, 12)
    expect(result.notes.some((n) => n.includes('series form'))).toBe(true)
  })

  it('converts series to ideal so that the two controllers are one transfer function (Åström and Hägglund, from memory)', () => {
    // Kc(1 + 1/(τI s))(1 + τD s) = Kc(τI τD s² + (τI + τD)s + 1)/(τI s); ideal: Kc'(Ti Td s² + Ti s + 1)/(Ti s).
    const [kc, ti, td] = [1.7, 9, 2]
    const ideal = seriesToIdeal(kc, ti, td)
    const series = [kc * ti * td, kc * (ti + td), kc].map((c) => c / ti)
    const parallel = [ideal.gain * ideal.integralTime * ideal.derivativeTime!, ideal.gain * ideal.integralTime, ideal.gain].map((c) => c / ideal.integralTime)
    parallel.forEach((c, i) => expect(c).toBeCloseTo(series[i]!, 12))
  })
})

describe('lambda (IMC-based) PI', () => {
  it('sets Ti = τ and Kc = τ/(K(λ + θ)) (the rule as Åström and Hägglund give it, evaluated by hand)', () => {
    // K = 1.4 %/%, τ = 6 s, θ = 2 s, λ = 6 s: Kc = 6/(1.4·8) = 0.5357, Ti = 6.
    const result = tune({ rule: 'lambda-pi', model: { gain: 1.4, timeConstant: 6, deadTime: 2 }, closedLoopTimeConstant: 6 })
    expect(result.settings.gain).toBeCloseTo(0.5357, 4)
    expect(result.settings.integralTime).toBe(6)
    expect(result.closedLoopTimeConstant).toBe(6)
  })

  it('gives SIMC\'s example E1 again with λ = θ, where the two rules coincide (τ ≤ 4(τc + θ); values from memory)', () => {
    // Skogestad, J. Process Control 13 (2003) 291–309, example E1 (from memory): k = 1, τ = 2.5, θ = 1.47, τc = θ
    // gives Kc = 0.85, τI = 2.5. The lambda rule with λ = τc is the same PI there: its τI = τ is SIMC's min{τ, 4(τc + θ)}.
    const result = tune({ rule: 'lambda-pi', model: { gain: 1, timeConstant: 2.5, deadTime: 1.47 }, closedLoopTimeConstant: 1.47 })
    expect(result.settings.gain).toBeCloseTo(0.85, 2)
    expect(result.settings.integralTime).toBe(2.5)
  })

  it('needs the engineer\'s λ', () => {
    expect(() => tune({ rule: 'lambda-pi', model: { gain: 1, timeConstant: 5, deadTime: 1 } })).toThrow(TuningError)
  })
})

describe('Ziegler–Nichols 1942 ultimate cycle', () => {
  it('finds Ku ≈ 2.26, ωu ≈ 2.03 rad/s for e^(−s)/(s + 1) (a value quoted across the PID literature, from memory)', () => {
    const ultimate = ultimateCycle({ gain: 1, timeConstant: 1, deadTime: 1 })!
    expect(ultimate.gain).toBeCloseTo(2.26, 2)
    expect(ultimate.frequency).toBeCloseTo(2.03, 2)
  })

  for (const [k, tau, theta] of [
    [1, 1, 1],
    [1.4, 6, 2],
    [0.3, 40, 1.5],
    [2.5, 2, 12],
  ] as const) {
    it(`takes Ku and Pu from the engine's −180° crossing of K = ${k}, τ = ${tau}, θ = ${theta} (bisection on the phase equation agrees to 1e-6)`, () => {
      const reference = ultimateByBisection(k, tau, theta)
      const ultimate = ultimateCycle({ gain: k, timeConstant: tau, deadTime: theta })!
      expect(relative(ultimate.gain, reference.gain)).toBeLessThan(1e-6)
      expect(relative(ultimate.period, reference.period)).toBeLessThan(1e-6)
      const pi = tune({ rule: 'zn-pi', model: { gain: k, timeConstant: tau, deadTime: theta } })
      // Ziegler and Nichols (1942): PI Kc = 0.45 Ku, Ti = Pu/1.2; PID Kc = 0.6 Ku, Ti = Pu/2, Td = Pu/8.
      expect(relative(pi.settings.gain, 0.45 * reference.gain)).toBeLessThan(1e-6)
      expect(relative(pi.settings.integralTime, reference.period / 1.2)).toBeLessThan(1e-6)
      const pid = tune({ rule: 'zn-pid', model: { gain: k, timeConstant: tau, deadTime: theta } })
      expect(relative(pid.settings.gain, 0.6 * reference.gain)).toBeLessThan(1e-6)
      expect(relative(pid.settings.integralTime, reference.period / 2)).toBeLessThan(1e-6)
      expect(relative(pid.settings.derivativeTime!, reference.period / 8)).toBeLessThan(1e-6)
    })
  }

  it('has no ultimate cycle without dead time, and keeps the sign of a reverse-acting plant', () => {
    expect(ultimateCycle({ gain: 1, timeConstant: 5, deadTime: 0 })).toBeNull()
    expect(() => tune({ rule: 'zn-pi', model: { gain: 1, timeConstant: 5, deadTime: 0 } })).toThrow(/never reaches −180°/)
    const reverse = tune({ rule: 'zn-pi', model: { gain: -1, timeConstant: 1, deadTime: 1 } })
    expect(reverse.settings.gain).toBeCloseTo(-0.45 * ultimateByBisection(1, 1, 1).gain, 6)
  })
})

describe('every rule', () => {
  it('answers a formula, a source and settings for a plant with dead time, and refuses a model that is no plant', () => {
    for (const rule of tuningRules) {
      const result = tune({ rule, model: { gain: 1.4, timeConstant: 6, deadTime: 2 }, closedLoopTimeConstant: 4 })
      expect(result.settings.gain).toBeGreaterThan(0)
      expect(result.settings.integralTime).toBeGreaterThan(0)
      // The formula is TeX that KaTeX (the app's typesetter) takes without error.
      expect(() => katex.renderToString(result.formulaTex, { throwOnError: true, displayMode: true })).not.toThrow()
      expect(result.source.length).toBeGreaterThan(20)
    }
    expect(() => tune({ rule: 'simc-pi', model: { gain: 0, timeConstant: 6, deadTime: 2 } })).toThrow(TuningError)
    expect(() => tune({ rule: 'simc-pi', model: { gain: 1, timeConstant: -6, deadTime: 2 } })).toThrow(TuningError)
    expect(() => tune({ rule: 'simc-pi', model: { gain: 1, timeConstant: 6, deadTime: 0 } })).toThrow(/give the closed-loop time constant/)
  })
})

import { readFileSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import { describe, expect, it } from 'vitest'
import { CalcTimeoutError } from '#shared/calc/errors'
import { stepResponse } from '#shared/calc/step'

const examples = fileURLToPath(new URL('../../../shared/examples/expected/', import.meta.url))
const expected = (name: string) => JSON.parse(readFileSync(`${examples}${name}.json`, 'utf8'))

/** Contract tolerance for step metrics: 0.5 % relative. */
function within(value: number | null, want: number, relative = 0.005) {
  expect(value).not.toBeNull()
  expect(Math.abs((value as number) - want)).toBeLessThanOrEqual(relative * Math.abs(want))
}

/**
 * Metrics of a closed-form response y(t), found here independently of the
 * engine: dense sampling (every `dt`) then bisection on y itself.
 */
function denseMetrics(y: (t: number) => number, finalValue: number, end: number, dt: number) {
  const z = (t: number) => y(t) / finalValue
  const bisect = (a: number, b: number, g: (t: number) => number) => {
    const ga = Math.sign(g(a))
    for (let i = 0; i < 80; i++) {
      const m = (a + b) / 2
      if (Math.sign(g(m)) === ga) a = m
      else b = m
    }
    return (a + b) / 2
  }
  const first = (level: number) => {
    if (z(0) >= level) return 0
    for (let t = 0; t < end; t += dt) if (z(t + dt) >= level) return bisect(t, t + dt, (u) => z(u) - level)
    return Number.NaN
  }
  let settling = 0
  for (let t = end; t > 0; t -= dt) {
    if (Math.abs(z(t - dt) - 1) > 0.02) {
      settling = bisect(t - dt, t, (u) => Math.abs(z(u) - 1) - 0.02)
      break
    }
  }
  return { rise: first(0.9) - first(0.1), settling }
}

describe('stepResponse', () => {
  // Source: shared/examples/expected/*.json (independent reference: scipy's step response, Debian's python3-scipy).
  for (const name of ['booster-pressure', 'third-order-gain-range', 'type1-gain-margin']) {
    it(`matches the reference step metrics of the ${name} example within 0.5 %`, () => {
      const ref = expected(name)
      const r = stepResponse(ref.closed_loop.num, ref.closed_loop.den)
      within(r.metrics.final_value, ref.step.final_value, 1e-12)
      if (ref.step.overshoot_pct === 0) {
        expect(r.metrics.overshoot_pct).toBe(0)
        expect(r.metrics.peak_time_s).toBeNull()
      } else {
        within(r.metrics.overshoot_pct, ref.step.overshoot_pct)
        within(r.metrics.peak_time_s, ref.step.peak_time_s)
      }
      within(r.metrics.rise_time_s, ref.step.rise_time_s)
      within(r.metrics.settling_time_s, ref.step.settling_time_s)
      expect(r.t.length).toBe(r.y.length)
      expect(r.t.length).toBeLessThanOrEqual(600)
      expect(r.t.length).toBeGreaterThan(50)
    })
  }

  for (const [zeta, wn] of [[0.2, 1], [0.5, 2], [0.7, 10], [0.9, 0.3]]) {
    it(`gives the standard second-order system's overshoot, peak time and settling time (ζ = ${zeta}, ωn = ${wn})`, () => {
      // Source: the published second-order formulas, e.g. Nise, "Control Systems Engineering", ch. 4, and
      // Ogata, "Modern Control Engineering", ch. 5 (from memory): %OS = 100·exp(−ζπ/√(1−ζ²)), Tp = π/(ωn√(1−ζ²)).
      const r = stepResponse([wn * wn], [1, 2 * zeta * wn, wn * wn])
      const root = Math.sqrt(1 - zeta * zeta)
      within(r.metrics.overshoot_pct, 100 * Math.exp((-zeta * Math.PI) / root))
      within(r.metrics.peak_time_s, Math.PI / (wn * root))
      // Settling and rise have no exact closed form: compared with a dense evaluation of the closed-form
      // response y(t) = 1 − e^{−ζωn t}(cos ωd t + ζ/√(1−ζ²) sin ωd t) (same texts), computed here.
      const wd = wn * root
      const y = (t: number) => 1 - Math.exp(-zeta * wn * t) * (Math.cos(wd * t) + (zeta / root) * Math.sin(wd * t))
      const dense = denseMetrics(y, 1, 12 / (zeta * wn), 1e-3 / wn)
      within(r.metrics.settling_time_s, dense.settling)
      within(r.metrics.rise_time_s, dense.rise)
      // The textbook's 4/(ζωn) is an approximation (envelope e^{−ζωn t} = 2 %): the exact settling time lies
      // within about 30 % of it over this range of ζ (common practice).
      const approximation = 4 / (zeta * wn)
      expect(Math.abs((r.metrics.settling_time_s as number) - approximation) / approximation).toBeLessThan(0.3)
    })
  }

  it('gives τ·ln 9 rise and τ·ln 50 settling for a first-order lag, no overshoot', () => {
    // Source: closed form of K/(τs + 1): y = K(1 − e^{−t/τ}), 10 % at τ ln(10/9), 90 % at τ ln 10, 2 % at τ ln 50.
    const tau = 4
    const r = stepResponse([2.5], [tau, 1])
    within(r.metrics.final_value, 2.5, 1e-12)
    within(r.metrics.rise_time_s, tau * Math.log(9), 1e-6)
    within(r.metrics.settling_time_s, tau * Math.log(50), 1e-6)
    expect(r.metrics.overshoot_pct).toBe(0)
    expect(r.metrics.peak_time_s).toBeNull()
  })

  it('hands the plot exact samples of the response, and takes the poles when the caller has them', () => {
    // Source: closed form of K/(τs + 1): y = K(1 − e^{−t/τ}).
    const r = stepResponse([2.5], [4, 1])
    expect(r.t.length).toBeGreaterThanOrEqual(300)
    r.t.forEach((t, i) => expect(r.y[i]).toBeCloseTo(2.5 * (1 - Math.exp(-t / 4)), 10))
    // Source: the booster example's closed loop (shared/examples/expected/booster-pressure.json) with its reference poles.
    const ref = expected('booster-pressure')
    const own = stepResponse(ref.closed_loop.num, ref.closed_loop.den)
    const given = stepResponse(ref.closed_loop.num, ref.closed_loop.den, { poles: ref.poles })
    within(given.metrics.settling_time_s, own.metrics.settling_time_s as number, 1e-9)
    within(given.metrics.rise_time_s, own.metrics.rise_time_s as number, 1e-9)
  })

  it('handles a repeated pole with a right-half-plane zero: (1 − s)/(s + 1)^2', () => {
    // Source: closed form by partial fractions, y = 1 − e^{−t} − 2t·e^{−t}, which starts downwards and never passes 1.
    const r = stepResponse([-1, 1], [1, 2, 1])
    const dense = denseMetrics((t) => 1 - Math.exp(-t) - 2 * t * Math.exp(-t), 1, 30, 1e-3)
    expect(r.metrics.overshoot_pct).toBe(0)
    expect(r.metrics.peak_time_s).toBeNull()
    within(r.metrics.rise_time_s, dense.rise)
    within(r.metrics.settling_time_s, dense.settling)
    expect(Math.min(...r.y)).toBeLessThan(-0.2)
  })

  it('starts at the direct term of a biproper T(s) = (0.5s + 1)/(s + 1)', () => {
    // Source: closed form, y = 1 − 0.5e^{−t}: 10 % is passed at t = 0, 90 % at ln 5, inside 2 % from ln 25.
    const r = stepResponse([0.5, 1], [1, 1])
    expect(r.y[0]).toBeCloseTo(0.5, 12)
    within(r.metrics.rise_time_s, Math.log(5), 1e-6)
    within(r.metrics.settling_time_s, Math.log(25), 1e-6)
  })

  it('refuses metrics for an improper, an unstable and a zero-gain T(s), with a warning each', () => {
    // Source: the contract's definitions (calc-contract.md, "Result": no step metrics without a final value).
    const improper = stepResponse([1, 0, 0], [1, 1])
    expect(improper.metrics.final_value).toBeNull()
    expect(improper.warnings[0]).toMatch(/improper/)
    const unstable = stepResponse([1], [1, -1])
    expect(unstable.metrics).toEqual({ final_value: null, overshoot_pct: null, peak_time_s: null, rise_time_s: null, settling_time_s: null })
    expect(unstable.warnings[0]).toMatch(/unstable/)
    const marginal = stepResponse([8], [1, 2, 4, 8])
    expect(marginal.metrics.final_value).toBeNull()
    expect(marginal.warnings[0]).toMatch(/marginal/)
    const zeroGain = stepResponse([1, 0], [1, 2, 1])
    expect(zeroGain.metrics.final_value).toBe(0)
    expect(zeroGain.metrics.rise_time_s).toBeNull()
  })

  it('handles a negative DC gain and time constants from milliseconds to minutes', () => {
    // Source: closed form, −3/((0.01s + 1)(60s + 1)) ≈ −3(1 − e^{−t/60}) beyond the fast lag: rise ≈ 60 ln 9, settling ≈ 60 ln 50.
    const r = stepResponse([-3], [0.6, 60.01, 1])
    within(r.metrics.final_value, -3, 1e-12)
    expect(r.metrics.overshoot_pct).toBe(0)
    within(r.metrics.rise_time_s, 60 * Math.log(9), 1e-3)
    within(r.metrics.settling_time_s, 60 * Math.log(50), 1e-3)
  })

  it('throws CalcTimeoutError once the deadline has passed', () => {
    // Source: the contract ("A computation that cannot finish within its time limit stops and says so").
    expect(() => stepResponse([1], [1, 2, 1], { deadline: Date.now() - 1 })).toThrow(CalcTimeoutError)
  })
})

import { readFileSync } from 'node:fs'
import { join } from 'node:path'
import { describe, expect, it } from 'vitest'
import { evaluateLoopText } from '../../shared/calc/index'

/**
 * The three loops of shared/examples/ against shared/examples/expected/, values
 * an independent reference computed (exact rational reduction with Debian's
 * python3-sympy, roots with python3-numpy, step response with python3-scipy,
 * frequency response with the exact delay), held to the contract's tolerances:
 * coefficients 1e-12 relative, poles 1e-8, margins and crossovers 1e-4, step
 * metrics 0.5 %.
 */
const examples = join(__dirname, '../../../shared/examples')
const names = ['booster-pressure', 'third-order-gain-range', 'type1-gain-margin']

/** |a − e| within `relative` of |e|, or of `scale` where e is 0 (a zero coefficient, an overshoot of 0). */
function close(actual: number | null, expected: number | null, relative: number, scale = 1, what = ''): void {
  if (expected === null) {
    expect(actual, what).toBeNull()
    return
  }
  expect(actual, what).not.toBeNull()
  const allowed = relative * (expected === 0 ? scale : Math.abs(expected))
  expect(Math.abs((actual as number) - expected), `${what}: ${actual} vs ${expected}`).toBeLessThanOrEqual(allowed)
}

function closeList(actual: number[], expected: number[], relative: number, what: string): void {
  expect(actual.length, what).toBe(expected.length)
  const scale = Math.max(...expected.map(Math.abs))
  expected.forEach((e, i) => close(actual[i], e, relative, scale, `${what}[${i}]`))
}

describe.each(names)('example %s', (name) => {
  const result = evaluateLoopText(readFileSync(join(examples, `${name}.json`), 'utf8'))
  const expected = JSON.parse(readFileSync(join(examples, 'expected', `${name}.json`), 'utf8'))

  it('has the reference closed loop and orders (1e-12)', () => {
    closeList(result.closed_loop.num, expected.closed_loop.num, 1e-12, 'num')
    closeList(result.closed_loop.den, expected.closed_loop.den, 1e-12, 'den')
    expect(result.closed_loop.den[0]).toBe(1)
    expect(result.order).toEqual(expected.order)
  })

  it('has the reference poles and zeros (1e-8)', () => {
    for (const key of ['poles', 'zeros'] as const) {
      expect(result[key].length, key).toBe(expected[key].length)
      expected[key].forEach((e: { re: number; im: number }, i: number) => {
        const a = result[key][i]
        const size = Math.hypot(e.re, e.im)
        expect(Math.hypot(a.re - e.re, a.im - e.im), `${key}[${i}]`).toBeLessThanOrEqual(1e-8 * Math.max(size, 1e-300))
      })
    }
  })

  it('has the reference verdict and Routh summary', () => {
    expect(result.stability).toBe(expected.stability)
    expect(result.routh.sign_changes).toBe(expected.routh.sign_changes)
    expect(result.routh.special_case).toBe(expected.routh.special_case)
  })

  it('has the reference DC gain and steady-state errors', () => {
    close(result.dc_gain, expected.dc_gain, 1e-12, 1, 'dc_gain')
    close(result.steady_state_error.step, expected.steady_state_error.step, 1e-12, 1e-12, 'step error')
    close(result.steady_state_error.ramp, expected.steady_state_error.ramp, 1e-12, 1e-12, 'ramp error')
  })

  it('has the reference margins and crossovers (1e-4)', () => {
    const m = result.margins!
    for (const key of ['gain_margin_db', 'phase_crossover_rad_s', 'phase_margin_deg', 'gain_crossover_rad_s'] as const) close(m[key], expected.margins[key], 1e-4, 1, key)
    closeList(m.crossings.phase, expected.margins.crossings.phase, 1e-4, 'phase crossings')
    closeList(m.crossings.gain, expected.margins.crossings.gain, 1e-4, 'gain crossings')
  })

  it('has the reference step metrics (0.5 %)', () => {
    const s = result.step!
    for (const key of ['final_value', 'overshoot_pct', 'peak_time_s', 'rise_time_s', 'settling_time_s'] as const)
      close(s[key], expected.step[key], 0.005, 0.005, key)
    expect(result.plots.step!.t.length).toBe(result.plots.step!.y.length)
  })

  it.runIf(expected.stability_range)('has the reference stable range', () => {
    expect(result.stability_range!.parameter).toBe(expected.stability_range.parameter)
    closeList(result.stability_range!.intervals.flat(), expected.stability_range.intervals.flat(), 1e-6, 'intervals')
  })
})

describe('booster example, the rest of the result', () => {
  const result = evaluateLoopText(readFileSync(join(examples, 'booster-pressure.json'), 'utf8'))

  it('has 2^4 tolerance corners (four parameters with a band), all stable', () => {
    expect(result.tolerance_corners.count).toBe(16)
    expect(result.tolerance_corners.all_stable).toBe(true)
    expect(Object.keys(result.tolerance_corners.worst)).toEqual(['phase_margin_deg', 'gain_margin_db', 'overshoot_pct'])
  })

  it('rows each criterion with its limit and the nominal value', () => {
    expect(result.criteria.map((c) => [c.name, c.limit, c.pass])).toEqual([
      ['phase_margin_deg', 45, true],
      ['gain_margin_db', 6, true],
      ['overshoot_pct', 15, true],
    ])
    expect(result.criteria[0].value).toBe(result.margins!.phase_margin_deg)
  })

  it('lists L(s) = forward × return normalised, without dead time', () => {
    // L = Kc·Kd·Kg·wn²·Kt·(Ti s + 1) / (Ti s (td s + 1)(s² + 2ζ wn s + wn²)) at the values, by hand: 4.32 s + 1.44 over 1.5 s⁴ + … /1.5.
    closeList(result.open_loop!.num, [4.32, 1.44], 1e-12, 'open num')
    closeList(result.open_loop!.den, [1, 3.8, 5.85, 4.5, 0], 1e-12, 'open den')
    expect(result.open_loop!.delay_s).toBe(0)
  })
})

/**
 * The reference proves itself first: run over the three loops in
 * ../shared/examples/, it must reproduce ../shared/examples/expected/ (computed
 * independently: exact rational reduction with sympy, roots with numpy, step
 * response with scipy, frequency response with the exact delay; all Debian's
 * packages) within the contract's tolerances. A broken reference fails here
 * instead of letting reference.test.ts pass or fail for the wrong reason.
 */
import { readFileSync } from 'node:fs'
import { beforeAll, describe, expect, it } from 'vitest'
import { TOLERANCE, coefficientProblem, rootsProblem, scalarProblem } from './reference-compare'
import { type RefResult, runReference } from './reference-run'

const EXAMPLES = '/work/shared/examples'
const names = ['booster-pressure', 'third-order-gain-range', 'type1-gain-margin']
const loops = names.map((n) => JSON.parse(readFileSync(`${EXAMPLES}/${n}.json`, 'utf8')))
const expected = names.map((n) => JSON.parse(readFileSync(`${EXAMPLES}/expected/${n}.json`, 'utf8')))

describe('the independent reference reproduces shared/examples/expected', () => {
  let results: RefResult[] = []
  beforeAll(() => {
    results = runReference(loops)
  }, 120_000)
  it('runs under Debian python3 with sympy, numpy and scipy', () => {
    expect(results.map((r) => r.error ?? 'ok')).toEqual(['ok', 'ok', 'ok'])
  })

  names.forEach((name, i) => {
    it(`${name}: closed loop, order, poles, zeros, verdict, Routh, DC gain, errors, margins, step`, () => {
      const r = results[i]!
      const e = expected[i]!
      const problems = [
        coefficientProblem('closed_loop.num', r.closed_loop.num, e.closed_loop.num),
        coefficientProblem('closed_loop.den', r.closed_loop.den, e.closed_loop.den),
        rootsProblem('poles', r.poles, e.poles.map((p: { re: number; im: number }) => ({ ...p, multiplicity: 1 }))),
        rootsProblem('zeros', r.zeros, e.zeros.map((p: { re: number; im: number }) => ({ ...p, multiplicity: 1 }))),
        scalarProblem('dc_gain', r.dc_gain, e.dc_gain, TOLERANCE.coefficient, 1e-15),
        scalarProblem('steady_state_error.step', r.steady_state_error?.step, e.steady_state_error.step, TOLERANCE.coefficient, 1e-15),
        scalarProblem('steady_state_error.ramp', r.steady_state_error?.ramp, e.steady_state_error.ramp, TOLERANCE.coefficient, 1e-15),
      ]
      for (const f of ['gain_margin_db', 'phase_crossover_rad_s', 'phase_margin_deg', 'gain_crossover_rad_s'] as const)
        problems.push(scalarProblem(`margins.${f}`, r.margins![f], e.margins[f], TOLERANCE.margin))
      for (const kind of ['phase', 'gain'] as const) {
        problems.push(coefficientProblem(`margins.crossings.${kind}`, r.margins!.crossings[kind], e.margins.crossings[kind], undefined, TOLERANCE.margin))
      }
      for (const f of ['final_value', 'overshoot_pct', 'peak_time_s', 'rise_time_s', 'settling_time_s'] as const)
        problems.push(scalarProblem(`step.${f}`, r.step![f], e.step[f], TOLERANCE.step, f === 'overshoot_pct' ? 1e-9 : 0))
      expect(problems.filter(Boolean)).toEqual([])
      expect(r.order).toEqual(e.order)
      expect(r.stability).toBe(e.stability)
      expect(r.routh.sign_changes).toBe(e.routh.sign_changes)
    })
  })

  it('the reference itself can fail: a perturbed expectation is caught', () => {
    const r = results[0]!
    const perturbed = r.closed_loop.den.map((c, k) => (k === 2 ? c * (1 + 1e-9) : c))
    expect(coefficientProblem('den', r.closed_loop.den, perturbed)).not.toBeNull()
    expect(scalarProblem('pm', r.margins!.phase_margin_deg! * (1 + 2e-4), r.margins!.phase_margin_deg, TOLERANCE.margin)).not.toBeNull()
  })
})

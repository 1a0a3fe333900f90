import { describe, expect, it } from 'vitest'
import { fitStepTest, locateStep, twoPointFit } from '#shared/calc/step-fit'
import { StepTestError, readStepRecord } from '#shared/calc/step-test'
import { type SyntheticStepTest, sampleStepTest, syntheticStepCsv } from '../../scripts/lib/synthetic-step-test'

/**
 * Step tests made from a known first-order-plus-dead-time model (its exact
 * sampled step response, scripts/lib/synthetic-step-test.ts) with seeded
 * Gaussian noise: the fits must give the model back within the tolerances
 * stated beside each check.
 */
// The tests' invented plant (K = 1.8, τ = 12 s, θ = 3.5 s) without noise; each case adds what it checks.
const base: SyntheticStepTest = { ...sampleStepTest, noise: 0, seed: 1 }

function refusal(run: () => unknown): StepTestError {
  try {
    run()
  } catch (error) {
    if (error instanceof StepTestError) return error
    throw error
  }
  throw new Error('expected a StepTestError')
}

describe('the two-point (28.3 % / 63.2 %) method', () => {
  it('follows its published formulas τ = 1.5(t63 − t28), θ = t63 − τ (Smith 1972, from memory)', () => {
    const record = readStepRecord(syntheticStepCsv({ ...base, sampleTime: 0.01, samples: 12_000 }))
    const step = locateStep(record)
    const fit = twoPointFit(record, step, 20, 20 + 1.8 * 10)
    expect(fit.timeConstant).toBeCloseTo(1.5 * (fit.t63 - fit.t28), 12)
    expect(fit.deadTime).toBeCloseTo(fit.t63 - fit.timeConstant, 12)
    // On the exact FOPDT response the points fall at θ + τ/3 and θ + τ (1 − e^(−1/3) = 0.2835, 1 − e^(−1) = 0.6321):
    // 0.283 and 0.632 are those to three figures, so t28 sits 0.2 % of τ early at most; 0.01 s samples.
    expect(fit.t28).toBeCloseTo(3.5 + 12 / 3, 1)
    expect(fit.t63).toBeCloseTo(3.5 + 12, 1)
    expect(Math.abs(fit.timeConstant - 12) / 12).toBeLessThan(0.005)
    expect(Math.abs(fit.deadTime - 3.5)).toBeLessThan(0.05)
    expect(fit.gain).toBeCloseTo(1.8, 10)
  })
})

describe('fits of synthetic step tests with seeded noise', () => {
  // Noise σ is 0.15 of a PV change of 18 (0.8 %), over 110 s after the step (> θ + 7τ).
  const cases: Array<[string, Partial<SyntheticStepTest>]> = [
    ['a lag-dominant plant', {}],
    ['a dead-time-dominant plant', { timeConstant: 4, deadTime: 9, seed: 2 }],
    ['a reverse-acting plant stepped down', { gain: -0.75, outputBefore: 60, outputAfter: 45, baseline: 80, noise: 0.05, seed: 3 }],
  ]
  for (const [name, change] of cases) {
    it(`recovers ${name}`, () => {
      const spec = { ...base, noise: 0.15, ...change }
      const fit = fitStepTest(readStepRecord(syntheticStepCsv(spec)))
      expect(fit.step).toMatchObject({ index: 50, time: 10, found: true })
      expect(fit.step.change).toBeCloseTo(spec.outputAfter - spec.outputBefore, 12)
      // Two-point: gain within 2 %, τ within 6 %, θ within 0.1·τ (it reads two points of a noisy record).
      expect(Math.abs(fit.twoPoint.gain / spec.gain - 1)).toBeLessThan(0.02)
      expect(Math.abs(fit.twoPoint.timeConstant / spec.timeConstant - 1)).toBeLessThan(0.06)
      expect(Math.abs(fit.twoPoint.deadTime - spec.deadTime)).toBeLessThan(0.1 * spec.timeConstant)
      // Least squares: gain within 1 %, τ within 2 %, θ within one sample (0.2 s).
      expect(Math.abs(fit.leastSquares.gain / spec.gain - 1)).toBeLessThan(0.01)
      expect(Math.abs(fit.leastSquares.timeConstant / spec.timeConstant - 1)).toBeLessThan(0.02)
      expect(Math.abs(fit.leastSquares.deadTime - spec.deadTime)).toBeLessThan(spec.sampleTime)
      // The residual of the least-squares fit is the noise: RMSE within 10 % of σ, never above the two-point fit's.
      expect(Math.abs(fit.leastSquares.rmse / spec.noise - 1)).toBeLessThan(0.1)
      expect(fit.leastSquares.rmse).toBeLessThanOrEqual(fit.twoPoint.rmse + 1e-12)
      expect(fit.leastSquares.r2).toBeGreaterThan(0.99)
      expect(fit.warnings).toEqual([])
    })
  }

  it('takes the step the engineer gives and plots at most 800 points with the step kept', () => {
    const spec = { ...base, noise: 0.15, samples: 5000, sampleTime: 0.05 }
    const fit = fitStepTest(readStepRecord(syntheticStepCsv(spec)), { stepTime: 9.99 })
    expect(fit.step).toMatchObject({ index: 200, time: 10, found: false })
    expect(fit.plot.t.length).toBeLessThanOrEqual(803)
    expect(fit.plot.t).toContain(10)
    expect(fit.plot.t).toContain(9.95)
    for (const series of [fit.plot.output, fit.plot.process, fit.plot.twoPoint, fit.plot.leastSquares]) expect(series).toHaveLength(fit.plot.t.length)
    expect(fit.plot.leastSquares[0]).toBeCloseTo(fit.baseline, 12)
  })

  it('warns when the record stops before the response has settled', () => {
    const fit = fitStepTest(readStepRecord(syntheticStepCsv({ ...base, samples: 150 })))
    expect(fit.warnings.some((w) => w.includes('less than θ + 4τ'))).toBe(true)
  })
})

describe('reading the record', () => {
  it('recognises the columns and the units from the header, and the sample time from the time column', () => {
    const csv = 'Flow [L/h],Time (min),CO (%)\n' + Array.from({ length: 20 }, (_, i) => `${i < 5 ? 1 : 2},${i * 0.5},${i < 5 ? 10 : 20}`).join('\n')
    const record = readStepRecord(csv)
    expect(record.columns.time).toEqual({ number: 2, header: 'Time (min)', unit: 'min' })
    expect(record.columns.output.number).toBe(3)
    expect(record.columns.process).toEqual({ number: 1, header: 'Flow [L/h]', unit: 'L/h' })
    expect(record.timeUnit).toBe('min')
    expect(record.sampleTime).toBe(30)
    expect(record.t[19]).toBe(19 * 30)
  })

  it('takes columns chosen by number, and a given sample time where there is no time column', () => {
    const rows = Array.from({ length: 20 }, (_, i) => `x,${i < 5 ? 10 : 20};${i < 5 ? 1 : 2}`.replace(';', ','))
    const record = readStepRecord(`note,a,b\n${rows.join('\n')}`, { columns: { time: null, output: 2, process: 3 }, sampleTime: 0.5 })
    expect(record.sampleTime).toBe(0.5)
    expect(record.sampleTimeFrom).toBe('given')
    expect(record.t[3]).toBe(1.5)
    expect(Array.from(record.output.subarray(4, 6))).toEqual([10, 20])
    expect(refusal(() => readStepRecord(`a,b\n${'1,2\n'.repeat(12)}`, { columns: { time: null, output: 1, process: 2 } })).field).toBe('sampleTime')
  })

  it('refuses a bad row naming it as the file counts rows (1-based, header and comments included)', () => {
    const good = Array.from({ length: 20 }, (_, i) => `${i},${i < 5 ? 10 : 20},${i}`)
    const withRow = (index: number, text: string) => ['# invented record', 'time,output,pv', ...good.map((row, i) => (i === index ? text : row))].join('\n')
    // Data row i sits on file row i + 3 (a comment line and the header first).
    const text = refusal(() => readStepRecord(withRow(6, '6,ten,6')))
    expect(text).toMatchObject({ row: 9, field: 'file' })
    expect(text.message).toBe('row 9: "output" is not a number ("ten")')
    expect(refusal(() => readStepRecord(withRow(10, '10,20'))).message).toBe('row 13: "pv" is missing')
    expect(refusal(() => readStepRecord(withRow(4, '4,,4'))).row).toBe(7)
    const back = refusal(() => readStepRecord(withRow(12, '11,20,12')))
    expect(back.row).toBe(15)
    expect(back.message).toContain('the time does not increase')
    expect(refusal(() => readStepRecord(withRow(3, 'Infinity,10,3'))).row).toBe(6)
  })

  it('refuses what cannot be fitted, naming the field', () => {
    expect(refusal(() => readStepRecord('')).field).toBe('file')
    expect(refusal(() => readStepRecord('speed,torque\n1,2\n')).field).toBe('columns')
    expect(refusal(() => readStepRecord('t,co,pv\n1,2,3\n2,2,3\n')).message).toContain('at least 10')
    expect(refusal(() => readStepRecord(syntheticStepCsv(base), { columns: { time: 1, output: 4, process: 3 } })).field).toBe('columns.output')
    const flat = readStepRecord(syntheticStepCsv({ ...base, outputAfter: 40 }))
    expect(refusal(() => fitStepTest(flat)).field).toBe('stepTime')
    expect(refusal(() => fitStepTest(readStepRecord(syntheticStepCsv(base)), { stepTime: 0 })).field).toBe('stepTime')
  })
})

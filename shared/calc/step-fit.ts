import { levenbergMarquardt } from 'ml-levenberg-marquardt'
import { type StepRecord, StepTestError } from './step-test'

/**
 * A first-order-plus-dead-time model fitted to a step test,
 *
 *     G(s) = K·e^(−θs) / (τs + 1),
 *
 * two ways: the two-point method from the times the process value takes to
 * reach 28.3 % and 63.2 % of its change, and least squares on the model's
 * step response, started from the two-point fit. The step is the largest
 * change of the controller output between two samples, or the one the
 * engineer gives. Gain in process-value units per % of output; times in s.
 */

export interface FopdtModel {
  gain: number
  timeConstant: number
  deadTime: number
}

export interface FitQuality {
  /** Root mean square of PV − model over the samples from the step to the end. */
  rmse: number
  /** 1 − SSE/SST over the same samples (SST about their mean). */
  r2: number
}

export type FopdtFit = FopdtModel & FitQuality

export interface StepLocation {
  /** Index of the first sample at the new output. */
  index: number
  /** Time of that sample, s from the record's start. */
  time: number
  outputBefore: number
  outputAfter: number
  /** outputAfter − outputBefore, %. */
  change: number
  /** True when Loopwright found it (the largest change), false when the engineer gave it. */
  found: boolean
}

export interface StepFitPlot {
  t: number[]
  output: number[]
  process: number[]
  twoPoint: number[]
  leastSquares: number[]
}

export interface StepFitResult {
  step: StepLocation
  /** Mean process value before the step, and the mean over the last tenth of the record after it. */
  baseline: number
  final: number
  twoPoint: FopdtFit & { t28: number; t63: number }
  leastSquares: FopdtFit & { iterations: number }
  /** At most PLOT_POINTS samples of the record and both fitted responses. */
  plot: StepFitPlot
  warnings: string[]
}

/** Points of the plot sent to the screen. */
export const PLOT_POINTS = 800
/** Samples the fit needs on either side of the step. */
const MIN_BEFORE = 3
const MIN_AFTER = 10
/**
 * ml-levenberg-marquardt has no convergence test of its own (it runs every
 * iteration asked for, or stops at an absolute SSE target): it is run in rounds
 * of LM_ROUND iterations until a round moves no parameter by more than
 * LM_SETTLED relative, at most LM_ROUNDS rounds. Sixty straight iterations on
 * 100,000 samples took 2.3 s (measured with scripts/bench-step-fit.ts); from
 * the two-point start two or three rounds suffice.
 */
const LM_ROUND = 3
const LM_ROUNDS = 20
const LM_SETTLED = 1e-7

/** The largest change of the output between two neighbouring samples, or the first sample at or after `time`. */
export function locateStep(record: StepRecord, time?: number): StepLocation {
  const { t, output } = record
  const n = t.length
  let index: number
  if (time === undefined) {
    index = 1
    let largest = -1
    for (let i = 1; i < n; i++) {
      const change = Math.abs(output[i]! - output[i - 1]!)
      if (change > largest) {
        largest = change
        index = i
      }
    }
  } else {
    if (!Number.isFinite(time)) throw new StepTestError('stepTime', 'the step time must be a number of seconds')
    index = t.findIndex((x) => x >= time)
    if (index < 0) throw new StepTestError('stepTime', `the step time ${time} s is after the record's last sample (${t[n - 1]} s)`)
  }
  if (index < MIN_BEFORE) throw new StepTestError('stepTime', `the step is at the ${ordinal(index + 1)} sample: the fit needs at least ${MIN_BEFORE} samples before it`)
  if (n - index < MIN_AFTER) throw new StepTestError('stepTime', `the step leaves ${n - index} samples after it: the fit needs at least ${MIN_AFTER}`)
  // Output levels: the mean of the samples before the step and of those after it (up to the record's end).
  const outputBefore = mean(output, 0, index)
  const outputAfter = mean(output, index, n)
  const change = outputAfter - outputBefore
  if (change === 0) throw new StepTestError('stepTime', 'the controller output does not change at the step')
  return { index, time: t[index]!, outputBefore, outputAfter, change, found: time === undefined }
}

/** Step response of the model after a step of `change` at `stepTime` from `baseline`. */
export function fopdtResponse(model: FopdtModel, baseline: number, change: number, stepTime: number): (t: number) => number {
  const { gain, timeConstant, deadTime } = model
  return (t) => {
    const since = t - stepTime - deadTime
    return since <= 0 ? baseline : baseline + gain * change * (1 - Math.exp(-since / timeConstant))
  }
}

/**
 * The two-point method: with t28 and t63 the times (from the step) at which
 * the response reaches 28.3 % and 63.2 % of its change, τ = 1.5·(t63 − t28)
 * and θ = t63 − τ (C. L. Smith, Digital Computer Process Control, Intext,
 * 1972; as given in D. E. Seborg, T. F. Edgar, D. A. Mellichamp, Process
 * Dynamics and Control, Wiley, ch. 7; both from memory). The points come from
 * the FOPDT response itself: 1 − e^(−1/3) = 0.283 at θ + τ/3, 1 − e^(−1) =
 * 0.632 at θ + τ. The crossings are read on the process value smoothed by a
 * centred moving average over about 1 % of the samples after the step, so that
 * noise does not make them early, and interpolated between samples.
 */
export function twoPointFit(record: StepRecord, step: StepLocation, baseline: number, final: number): FopdtModel & { t28: number; t63: number } {
  const { t, process } = record
  const n = t.length
  const rise = final - baseline
  const half = Math.floor((n - step.index) / 200)
  const smoothed = movingAverage(process, step.index, n, half)
  const crossing = (fraction: number): number => {
    const level = baseline + fraction * rise
    const above = (y: number) => (rise > 0 ? y >= level : y <= level)
    let previous = baseline
    for (let i = step.index; i < n; i++) {
      const y = smoothed[i - step.index]!
      if (above(y)) {
        if (i === step.index) return 0
        const before = t[i - 1]!
        const share = (level - previous) / (y - previous)
        return before + share * (t[i]! - before) - step.time
      }
      previous = y
    }
    throw new StepTestError('file', `the process value never reaches ${(fraction * 100).toFixed(1)} % of its change after the step: the record is too short or the response did not settle`)
  }
  const t28 = crossing(0.283)
  const t63 = crossing(0.632)
  const timeConstant = 1.5 * (t63 - t28)
  const deadTime = t63 - timeConstant
  return { gain: rise / step.change, timeConstant, deadTime, t28, t63 }
}

/**
 * Least squares on the model's step response: K, τ and θ minimising the sum of
 * squared differences from the process value after the step, by
 * ml-levenberg-marquardt with the analytic Jacobian, from the two-point fit.
 * The parameters are scaled (K by the start's K, τ and θ by its τ + θ) so the
 * one damping term suits all three.
 */
export function leastSquaresFit(record: StepRecord, step: StepLocation, baseline: number, start: FopdtModel): FopdtModel & { iterations: number } {
  const { t, process } = record
  const x = t.subarray(step.index)
  const y = process.subarray(step.index)
  const gainScale = start.gain === 0 ? 1 : start.gain
  const timeScale = Math.max(start.timeConstant, 0) + Math.max(start.deadTime, 0) || record.sampleTime
  const span = t[t.length - 1]! - step.time
  const du = step.change
  const t0 = step.time
  const model = ([k, tau, theta]: number[]) => {
    const K = k! * gainScale
    const T = tau! * timeScale
    const L = theta! * timeScale
    return (time: number) => {
      const since = time - t0 - L
      return since <= 0 ? baseline : baseline + K * du * (1 - Math.exp(-since / T))
    }
  }
  const jacobian = ([k, tau, theta]: number[]) => {
    const K = k! * gainScale
    const T = tau! * timeScale
    const L = theta! * timeScale
    return (time: number) => {
      const since = time - t0 - L
      if (since <= 0) return [0, 0, 0]
      const e = Math.exp(-since / T)
      return [gainScale * du * (1 - e), (-K * du * e * since * timeScale) / (T * T), (-K * du * e * timeScale) / T]
    }
  }
  let parameters = [1, Math.max(start.timeConstant, record.sampleTime) / timeScale, Math.max(start.deadTime, 0) / timeScale]
  let iterations = 0
  for (let round = 0; round < LM_ROUNDS; round++) {
    const fitted = levenbergMarquardt({ x: x as unknown as number[], y: y as unknown as number[] }, model, {
      initialValues: parameters,
      minValues: [-1e6, record.sampleTime / 100 / timeScale, 0],
      maxValues: [1e6, (100 * span) / timeScale, span / timeScale],
      jacobianFunction: jacobian,
      maxIterations: LM_ROUND,
      errorTolerance: 0,
    })
    iterations += fitted.iterations
    const moved = fitted.parameterValues.some((p, i) => Math.abs(p - parameters[i]!) > LM_SETTLED * Math.max(Math.abs(p), 1e-3))
    parameters = fitted.parameterValues
    if (!moved) break
  }
  const [k, tau, theta] = parameters
  return { gain: k! * gainScale, timeConstant: tau! * timeScale, deadTime: theta! * timeScale, iterations }
}

/** RMSE and R² of a model over the samples from the step to the end. */
export function fitQuality(record: StepRecord, step: StepLocation, response: (t: number) => number): FitQuality {
  const { t, process } = record
  const n = t.length
  const count = n - step.index
  const average = mean(process, step.index, n)
  let sse = 0
  let sst = 0
  for (let i = step.index; i < n; i++) {
    const y = process[i]!
    sse += (y - response(t[i]!)) ** 2
    sst += (y - average) ** 2
  }
  return { rmse: Math.sqrt(sse / count), r2: sst === 0 ? (sse === 0 ? 1 : 0) : 1 - sse / sst }
}

/** Both fits of one record, their quality and the plot. */
export function fitStepTest(record: StepRecord, options: { stepTime?: number } = {}): StepFitResult {
  const warnings: string[] = []
  const step = locateStep(record, options.stepTime)
  const n = record.t.length
  const baseline = mean(record.process, 0, step.index)
  const tail = Math.max(5, Math.floor((n - step.index) / 10))
  const final = mean(record.process, n - tail, n)
  if (final === baseline) throw new StepTestError('file', 'the process value does not change after the step')

  const twoPointModel = twoPointFit(record, step, baseline, final)
  if (twoPointModel.deadTime < 0) warnings.push(`The two-point method gives a negative dead time (${round(twoPointModel.deadTime)} s); it is taken as zero.`)
  const twoPoint = { ...twoPointModel, deadTime: Math.max(0, twoPointModel.deadTime) }
  const leastSquaresModel = leastSquaresFit(record, step, baseline, twoPoint)

  const twoPointResponse = fopdtResponse(twoPoint, baseline, step.change, step.time)
  const leastSquaresResponse = fopdtResponse(leastSquaresModel, baseline, step.change, step.time)
  const lastTime = record.t[n - 1]! - step.time
  if (lastTime < twoPoint.deadTime + 4 * twoPoint.timeConstant)
    warnings.push(`The record ends ${round(lastTime)} s after the step, less than θ + 4τ (${round(twoPoint.deadTime + 4 * twoPoint.timeConstant)} s) of the two-point fit: the final value, and so the gain, may be short of the settled one.`)
  const outputAfter = record.output.subarray(step.index)
  let drift = 0
  for (const u of outputAfter) drift = Math.max(drift, Math.abs(u - step.outputAfter))
  if (drift > 0.1 * Math.abs(step.change))
    warnings.push(`The controller output moves by up to ${round(drift)} % after the step (more than a tenth of the step): the fit assumes it stayed constant (an open-loop test).`)

  return {
    step,
    baseline,
    final,
    twoPoint: { ...twoPoint, ...fitQuality(record, step, twoPointResponse) },
    leastSquares: { ...leastSquaresModel, ...fitQuality(record, step, leastSquaresResponse) },
    plot: plotOf(record, step, twoPointResponse, leastSquaresResponse),
    warnings,
  }
}

function plotOf(record: StepRecord, step: StepLocation, twoPoint: (t: number) => number, leastSquares: (t: number) => number): StepFitPlot {
  const n = record.t.length
  const stride = Math.max(1, Math.ceil(n / PLOT_POINTS))
  const picked: number[] = []
  for (let i = 0; i < n; i += stride) picked.push(i)
  // The samples either side of the step, so the plot shows the step where it is.
  for (const i of [step.index - 1, step.index]) if (!picked.includes(i)) picked.push(i)
  if (picked[picked.length - 1] !== n - 1) picked.push(n - 1)
  picked.sort((a, b) => a - b)
  return {
    t: picked.map((i) => record.t[i]!),
    output: picked.map((i) => record.output[i]!),
    process: picked.map((i) => record.process[i]!),
    twoPoint: picked.map((i) => twoPoint(record.t[i]!)),
    leastSquares: picked.map((i) => leastSquares(record.t[i]!)),
  }
}

function mean(values: Float64Array, from: number, to: number): number {
  let sum = 0
  for (let i = from; i < to; i++) sum += values[i]!
  return sum / (to - from)
}

/** Centred moving average of values[from, to) over 2·half + 1 samples (fewer at the ends). */
function movingAverage(values: Float64Array, from: number, to: number, half: number): Float64Array {
  const out = new Float64Array(to - from)
  if (half === 0) {
    out.set(values.subarray(from, to))
    return out
  }
  const prefix = new Float64Array(to - from + 1)
  for (let i = from; i < to; i++) prefix[i - from + 1] = prefix[i - from]! + values[i]!
  for (let i = 0; i < to - from; i++) {
    const lo = Math.max(0, i - half)
    const hi = Math.min(to - from, i + half + 1)
    out[i] = (prefix[hi]! - prefix[lo]!) / (hi - lo)
  }
  return out
}

function ordinal(k: number): string {
  return k === 1 ? '1st' : k === 2 ? '2nd' : k === 3 ? '3rd' : `${k}th`
}

function round(x: number): number {
  return Number(x.toPrecision(4))
}

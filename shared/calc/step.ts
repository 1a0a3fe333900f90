import { checkDeadline, type DeadlineOption } from './deadline'
import { exponentialChain, exponentialHalves } from './matrix-exponential'
import { findRoots, modulusOf, toRoot, trimLeadingZeros } from './roots'
import { routhArray } from './routh'
import { stabilityVerdict } from './stability'
import type { StepMetrics, StepResponse } from './types'

/** Most points handed to the plot (the contract's limit), and the count given. */
export const PLOT_POINTS = 600
const PLOT_TARGET = 400
/** Fewest samples over the horizon, and samples per period of the fastest oscillating pole. */
const MIN_SAMPLES = 400
const SAMPLES_PER_PERIOD = 20
const MAX_SAMPLES = 200_000
/** Halvings of a sample step when a metric is refined (the step / 2^16), then one secant step: far below the 0.5 % the metrics need. */
const REFINE_HALVINGS = 16
/** Overshoot below this fraction of the final value is rounding, not overshoot (1e-5 %). */
const OVERSHOOT_FLOOR = 1e-7
/** The settling band of the contract: ±2 % of the final value. */
const SETTLING_BAND = 0.02

const NULL_METRICS: StepMetrics = { final_value: null, overshoot_pct: null, peak_time_s: null, rise_time_s: null, settling_time_s: null }

/**
 * Unit step response of T(s) = num/den, exactly: the controllable canonical
 * state-space form in a scaled time, stepped by its matrix exponential
 * (x_{k+1} = e^{Mh} x_k with M = [[A, B], [0, 0]], exact at the samples,
 * Moler and Van Loan 2003), and each metric refined between samples by
 * bisection on the exact solution (the state carried forward by
 * e^{Mh/2^j}). Definitions are the contract's: overshoot (peak − final)/|final|
 * × 100, rise 10 % to 90 % of the final value (first crossings), settling the
 * last time outside ±2 % of the final value.
 */
export interface StepOptions extends DeadlineOption {
  /** Roots of `den` when the caller has them already (saves finding them again); any order. */
  poles?: Array<{ re: number; im: number }>
  /** false: metrics only, no sampled curve (tolerance corners need no plot; it is a third of the cost). */
  plot?: boolean
}

export function stepResponse(num: number[], den: number[], options: StepOptions = {}): StepResponse {
  const started = Date.now()
  checkDeadline(options, 'the step response', started)
  const warnings: string[] = []
  const d = trimLeadingZeros(den)
  const numeratorIsZero = num.every((c) => c === 0)
  const b = numeratorIsZero ? [0] : trimLeadingZeros(num)
  const n = d.length - 1
  if (b.length - 1 > n) {
    warnings.push('T(s) is improper (numerator degree above the denominator degree): its step response contains impulses, so no step metrics are given.')
    return { metrics: { ...NULL_METRICS }, t: [], y: [], warnings }
  }

  const roots = options.poles && options.poles.length === n ? options.poles.map((r) => ({ re: r.re, im: r.im })) : findRoots(d)
  const poles = roots.map(toRoot)
  const verdict = stabilityVerdict(d, routhArray(d), poles)
  const finalValue = verdict === 'stable' ? b[b.length - 1]! / d[n]! : null

  if (n === 0) {
    const gain = b[0]! / d[0]!
    return {
      metrics: { final_value: gain, overshoot_pct: 0, peak_time_s: null, rise_time_s: 0, settling_time_s: 0 },
      t: [0, 1],
      y: [gain, gain],
      warnings: ['T(s) is a pure gain: the output follows the step at once.'],
    }
  }

  // Scaled time τ = ω0·t, ω0 the geometric mean of the pole magnitudes, so the
  // companion matrix has entries of order one whatever the loop's time scale.
  const magnitudes = roots.map((r) => modulusOf(r.re, r.im)).filter((m) => m > 0)
  const omega0 = magnitudes.length > 0 ? Math.exp(magnitudes.reduce((s, m) => s + Math.log(m), 0) / magnitudes.length) : 1
  const model = canonicalForm(b, d, omega0)

  const modes = verdict === 'stable' ? modeSizes(b, d, roots) : []
  const maxOscillation = Math.max(0, ...roots.map((r) => Math.abs(r.im)))
  const tScale = 1 / omega0

  // The horizon starts where every mode has fallen below the overshoot floor
  // (so no later excursion past the final value can be missed); it grows if
  // the last tenth has not settled, if the response is still above the final
  // value and rising at the end, or if a mode alive at the end could exceed
  // the peak found.
  let horizon = verdict === 'stable' ? horizonFor(modes, roots, OVERSHOOT_FLOOR * Math.abs(finalValue as number), Math.abs(finalValue as number)) : unstableHorizon(roots)
  let sim: Simulation | null = null
  let metrics: StepMetrics = { ...NULL_METRICS }
  for (let attempt = 0; attempt < 8; attempt++) {
    let h = horizon / MIN_SAMPLES
    if (maxOscillation > 0) h = Math.min(h, (2 * Math.PI) / maxOscillation / SAMPLES_PER_PERIOD)
    const count = Math.min(MAX_SAMPLES, Math.ceil(horizon / h))
    h = horizon / count
    sim = simulate(model, h * omega0, count, options, started)
    if (verdict !== 'stable' || finalValue === 0 || numeratorIsZero) break
    const y0 = finalValue as number
    // Settled when the last tenth keeps within half the band.
    let worst = 0
    for (let k = Math.floor(count * 0.9); k <= count; k++) worst = Math.max(worst, Math.abs(sim.y[k]! - y0))
    const atLimit = count === MAX_SAMPLES
    if (worst > 0.5 * SETTLING_BAND * Math.abs(y0) && !atLimit) {
      horizon *= 2
      continue
    }
    // Still climbing above the final value at the end: the peak lies later.
    let top = 0
    for (let k = 1; k <= count; k++) if (sim.y[k]! / y0 > sim.y[top]! / y0) top = k
    if (top === count && sim.y[count]! / y0 - 1 > OVERSHOOT_FLOOR && !atLimit) {
      horizon *= 1.5
      continue
    }
    const attemptWarnings: string[] = []
    metrics = measure(sim, model, y0, tScale, attemptWarnings, options, started)
    const overshoot = (metrics.overshoot_pct ?? 0) / 100
    if (overshoot > 0 && !atLimit) {
      const needed = horizonFor(modes, roots, 0.9 * overshoot * Math.abs(y0), Math.abs(y0))
      if (needed > horizon * 1.0001) {
        horizon = needed
        continue
      }
    }
    warnings.push(...attemptWarnings)
    break
  }
  sim = sim as Simulation

  if (verdict !== 'stable') {
    metrics = { ...NULL_METRICS }
    warnings.push(`The closed loop is ${verdict}: its step response has no final value, so no step metrics are given.`)
  } else if (numeratorIsZero || finalValue === 0) {
    metrics = { ...NULL_METRICS, final_value: 0 }
    warnings.push('T(0) = 0: the final value is zero, so overshoot, rise and settling (fractions of the final value) are undefined.')
  }

  if (options.plot === false) return { metrics, t: [], y: [], warnings }
  // The plot: PLOT_TARGET uniform points to 1.5 × the settling time, stepped
  // exactly by their own matrix exponential.
  const plotEnd = plotHorizon(metrics, sim.count * sim.h * tScale)
  const plotRun = simulate(model, (plotEnd / (PLOT_TARGET - 1)) * omega0, PLOT_TARGET - 1, options, started)
  const t = Array.from({ length: PLOT_TARGET }, (_, k) => (k * plotEnd) / (PLOT_TARGET - 1))
  const y = Array.from(plotRun.y)
  return { metrics, t, y, warnings }
}

interface CanonicalForm {
  /** Order of the denominator. */
  n: number
  /** Augmented matrix M = [[A, B], [0, 0]] of size n + 1, in scaled time. */
  m: Float64Array
  /** Output row C (length n) and direct term D. */
  c: Float64Array
  dTerm: number
}

/**
 * Controllable canonical form of T(σ) = num(ω0σ)/den(ω0σ) (e.g. Ogata,
 * "Modern Control Engineering", state-space chapter): x1' = x2, …,
 * xn' = −a_n x1 − … − a_1 xn + u, y = Σ (b_i − a_i b_0) x_{n+1−i} + b_0 u.
 */
function canonicalForm(num: number[], den: number[], omega0: number): CanonicalForm {
  const n = den.length - 1
  const a: number[] = []
  for (let i = 0; i <= n; i++) a.push(den[i]! / den[0]! / omega0 ** i)
  const padded = new Array(n + 1 - num.length).fill(0).concat(num)
  const bb: number[] = []
  for (let i = 0; i <= n; i++) bb.push(padded[i] / den[0]! / omega0 ** i)
  const size = n + 1
  const m = new Float64Array(size * size)
  for (let i = 0; i < n - 1; i++) m[i * size + i + 1] = 1
  for (let j = 0; j < n; j++) m[(n - 1) * size + j] = -a[n - j]!
  m[(n - 1) * size + n] = 1
  const c = new Float64Array(n)
  for (let j = 0; j < n; j++) c[j] = bb[n - j]! - a[n - j]! * bb[0]!
  return { n, m, c, dTerm: bb[0]! }
}

interface Simulation {
  /** Scaled-time step. */
  h: number
  count: number
  /** Augmented states [x; 1] at every sample, flat, and the outputs. */
  states: Float64Array
  y: Float64Array
  /** e^{M h / 2^j}, j = 0 … REFINE_HALVINGS, made when a refinement first needs them. */
  halves: Float64Array[] | null
}

function simulate(model: CanonicalForm, h: number, count: number, options: DeadlineOption, started: number): Simulation {
  const size = model.n + 1
  const chain = exponentialChain(model.m, size, h)
  const step = chain[0]!
  const states = new Float64Array((count + 1) * size)
  const y = new Float64Array(count + 1)
  states[model.n] = 1
  y[0] = model.dTerm
  for (let k = 1; k <= count; k++) {
    if ((k & 4095) === 0) checkDeadline(options, 'the step response', started)
    const from = (k - 1) * size
    const to = k * size
    for (let i = 0; i < size; i++) {
      let sum = 0
      for (let j = 0; j < size; j++) sum += step[i * size + j]! * states[from + j]!
      states[to + i] = sum
    }
    y[k] = output(model, states, to)
  }
  return { h, count, states, y, halves: null }
}

function output(model: CanonicalForm, w: Float64Array, offset: number): number {
  let sum = model.dTerm
  for (let j = 0; j < model.n; j++) sum += model.c[j]! * w[offset + j]!
  return sum
}

/** dy/dτ = C (A x + B): the last state's derivative is the companion row. */
function slope(model: CanonicalForm, w: Float64Array, offset: number): number {
  const size = model.n + 1
  let sum = 0
  for (let j = 0; j < model.n; j++) {
    let dx = 0
    for (let k = 0; k < size; k++) dx += model.m[j * size + k]! * w[offset + k]!
    sum += model.c[j]! * dx
  }
  return sum
}

function half(sim: Simulation, model: CanonicalForm, j: number): Float64Array {
  if (!sim.halves) sim.halves = exponentialHalves(model.m, model.n + 1, sim.h, REFINE_HALVINGS)
  return sim.halves[j]!
}

/**
 * Bisection on the exact solution inside sample interval k: `f` of the state
 * changes sign between t_k and t_{k+1}; the left end is carried forward by
 * e^{Mh/2^j} whenever the midpoint keeps the left sign. Returns the scaled
 * time and the state there.
 */
function bisect(sim: Simulation, model: CanonicalForm, k: number, f: (w: Float64Array) => number): { tau: number; state: Float64Array } {
  const size = model.n + 1
  let left = sim.states.slice(k * size, (k + 1) * size)
  let mid = new Float64Array(size)
  let tau = k * sim.h
  let fLeft = f(left)
  let fRight = f(sim.states.subarray((k + 1) * size, (k + 2) * size))
  const leftSign = Math.sign(fLeft)
  for (let j = 1; j <= REFINE_HALVINGS; j++) {
    const e = half(sim, model, j)
    for (let i = 0; i < size; i++) {
      let sum = 0
      for (let q = 0; q < size; q++) sum += e[i * size + q]! * left[q]!
      mid[i] = sum
    }
    const fMid = f(mid)
    if (Math.sign(fMid) === leftSign) {
      const swap = left
      left = mid
      mid = swap
      fLeft = fMid
      tau += sim.h / 2 ** j
    } else fRight = fMid
  }
  // The last bracket is h/2^REFINE_HALVINGS wide (about 1e-7 of the sample
  // step); a secant step across it leaves an error of the order of its square.
  const width = sim.h / 2 ** REFINE_HALVINGS
  const fraction = fLeft !== fRight && Number.isFinite(fLeft / (fLeft - fRight)) ? Math.min(1, Math.max(0, fLeft / (fLeft - fRight))) : 0.5
  return { tau: tau + fraction * width, state: left }
}

function measure(sim: Simulation, model: CanonicalForm, finalValue: number, tScale: number, warnings: string[], options: DeadlineOption, started: number): StepMetrics {
  const size = model.n + 1
  const z = (w: Float64Array, offset = 0) => output(model, w, offset) / finalValue
  const zSlope = (w: Float64Array, offset = 0) => slope(model, w, offset) / finalValue
  const count = sim.count
  const zs = new Float64Array(count + 1)
  for (let k = 0; k <= count; k++) zs[k] = sim.y[k]! / finalValue
  // Slopes only where asked: the peak's neighbourhood and the tail scanned for settling.
  const slopes = new Float64Array(count + 1).fill(Number.NaN)
  const slopeAt = (k: number): number => (Number.isNaN(slopes[k]) ? (slopes[k] = zSlope(sim.states, k * size)) : slopes[k]!)
  checkDeadline(options, 'the step response', started)

  /** The extremum inside interval k when the slope changes sign there, else null. */
  const extremumIn = (k: number): { tau: number; value: number; state: Float64Array } | null => {
    if (k >= count || Math.sign(slopeAt(k)) === Math.sign(slopeAt(k + 1)) || slopeAt(k) === 0) return null
    const r = bisect(sim, model, k, (w) => zSlope(w))
    return { tau: r.tau, value: z(r.state), state: r.state }
  }

  // Peak: the largest sample, then the extremum in either neighbouring interval.
  let peakIndex = 0
  for (let k = 1; k <= count; k++) if (zs[k]! > zs[peakIndex]!) peakIndex = k
  let peak: { tau: number; value: number } = { tau: peakIndex * sim.h, value: zs[peakIndex]! }
  for (const k of [peakIndex - 1, peakIndex]) {
    if (k < 0) continue
    const e = extremumIn(k)
    if (e && e.value > peak.value) peak = e
  }
  let overshoot = 0
  let peakTime: number | null = null
  if (peak.value - 1 > OVERSHOOT_FLOOR && peakIndex < count) {
    overshoot = (peak.value - 1) * 100
    peakTime = peak.tau * tScale
  }

  // Rise: first crossings of 10 % and 90 %.
  const firstCrossing = (level: number): number | null => {
    if (zs[0]! >= level) return 0
    for (let k = 0; k < count; k++) {
      if (zs[k + 1]! >= level) return bisect(sim, model, k, (w) => z(w) - level).tau * tScale
    }
    return null
  }
  const t10 = firstCrossing(0.1)
  const t90 = firstCrossing(0.9)
  const rise = t10 !== null && t90 !== null ? t90 - t10 : null
  if (rise === null) warnings.push('The step response never reaches 90 % of its final value within the horizon: no rise time.')

  // Settling: the last time outside the band, looking inside intervals at extrema too.
  const outside = (value: number) => Math.abs(value - 1) > SETTLING_BAND
  const bandExit = (w: Float64Array) => Math.abs(z(w) - 1) - SETTLING_BAND
  let settling: number | null = 0
  for (let k = count - 1; k >= 0; k--) {
    if (outside(zs[k + 1]!)) {
      settling = null
      warnings.push('The step response has not settled within ±2 % by the end of the horizon.')
      break
    }
    if (outside(zs[k]!)) {
      settling = bisect(sim, model, k, bandExit).tau * tScale
      break
    }
    // An extremum between samples can leave the band only if an end is within
    // h·(|z'_k| + |z'_{k+1}|) of the band's edge (with 20 samples a period the
    // curve strays from its samples far less than that), so only then is it refined.
    const room = SETTLING_BAND - Math.max(Math.abs(zs[k]! - 1), Math.abs(zs[k + 1]! - 1))
    if (room > sim.h * (Math.abs(slopeAt(k)) + Math.abs(slopeAt(k + 1)))) continue
    const e = extremumIn(k)
    if (e && outside(e.value)) {
      // Leaves the band after t_k and is back by t_{k+1}: the last exit lies after the extremum.
      settling = refineAfter(model, e.state, e.tau, (k + 1) * sim.h, bandExit) * tScale
      break
    }
  }
  return { final_value: finalValue, overshoot_pct: overshoot, peak_time_s: peakTime, rise_time_s: rise, settling_time_s: settling }
}

/**
 * Crossing of `f` (positive at the extremum, negative at tauEnd) after an
 * extremum at scaled time tauExtremum with state `start`: bisection, each
 * midpoint's state e^{M(τ − τ_e)}·start.
 */
function refineAfter(model: CanonicalForm, start: Float64Array, tauExtremum: number, tauEnd: number, f: (w: Float64Array) => number): number {
  const size = model.n + 1
  let lo = tauExtremum
  let hi = tauEnd
  const w = new Float64Array(size)
  for (let j = 0; j < 60 && hi - lo > (tauEnd - tauExtremum) * 1e-12; j++) {
    const mid = (lo + hi) / 2
    const e = exponentialChain(model.m, size, mid - tauExtremum)[0]!
    for (let i = 0; i < size; i++) {
      let sum = 0
      for (let q = 0; q < size; q++) sum += e[i * size + q]! * start[q]!
      w[i] = sum
    }
    if (f(w) > 0) lo = mid
    else hi = mid
  }
  return (lo + hi) / 2
}

interface Mode {
  decay: number
  /** |residue| of Y(s) = T(s)/s at the pole (a bound on the mode's size), or NaN for a repeated pole. */
  size: number
  multiplicity: number
}

/** Partial-fraction sizes r_i = num(p_i)/(p_i·den'(p_i)) of the step response's modes. */
function modeSizes(num: number[], den: number[], roots: Array<{ re: number; im: number }>): Mode[] {
  const derivative = den.slice(0, -1).map((c, i) => c * (den.length - 1 - i))
  return roots.map((r) => {
    const multiplicity = roots.filter((q) => q.re === r.re && q.im === r.im).length
    let size = Number.NaN
    if (multiplicity === 1) {
      const nv = evaluateComplex(num, r.re, r.im)
      const dv = evaluateComplex(derivative, r.re, r.im)
      size = modulusOf(nv.re, nv.im) / (modulusOf(dv.re, dv.im) * modulusOf(r.re, r.im))
    }
    return { decay: -r.re, size, multiplicity }
  })
}

/**
 * Time after which |y(t) − y∞| ≤ Σ|r_i|e^{Re p_i·t} stays below `level`: each
 * mode's ln(|r_i|/level)/|Re p_i| (distinct poles, where the bound is exact);
 * a repeated pole, whose residues cannot be taken, gets ln(|y∞|·10/level)·
 * (1 + 0.3·(multiplicity − 1)) time constants. Never shorter than five time
 * constants of the fastest pole.
 */
function horizonFor(modes: Mode[], roots: Array<{ re: number; im: number }>, level: number, scale: number): number {
  let horizon = 0
  for (const m of modes) {
    let t: number
    if (Number.isFinite(m.size)) t = m.size > level ? Math.log(m.size / level) / m.decay : 0
    else t = (Math.max(Math.log(1e4), Math.log((10 * scale) / Math.max(level, 1e-300))) * (1 + 0.3 * (m.multiplicity - 1))) / m.decay
    horizon = Math.max(horizon, t)
  }
  const fastest = Math.max(...roots.map((r) => modulusOf(r.re, r.im)))
  return Math.max(horizon, 5 / fastest)
}

/** Plot horizon of a loop without a final value: ten times the slowest non-zero pole's time scale. */
function unstableHorizon(roots: Array<{ re: number; im: number }>): number {
  const magnitudes = roots.map((r) => modulusOf(r.re, r.im)).filter((m) => m > 0)
  return magnitudes.length > 0 ? 10 / Math.min(...magnitudes) : 10
}

/** The plot runs to 1.5 × the settling time (at least twice the peak time), within the horizon computed. */
function plotHorizon(metrics: StepMetrics, horizon: number): number {
  if (metrics.settling_time_s === null || metrics.settling_time_s === 0) return horizon
  return Math.min(horizon, Math.max(1.5 * metrics.settling_time_s, 2 * (metrics.peak_time_s ?? 0)))
}

function evaluateComplex(p: number[], re: number, im: number): { re: number; im: number } {
  let br = 0
  let bi = 0
  for (const c of p) {
    const nr = br * re - bi * im + c
    bi = br * im + bi * re
    br = nr
  }
  return { re: br, im: bi }
}

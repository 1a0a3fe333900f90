import {
  cornerFrequencies,
  factorRational,
  nearestBranch,
  nextSample,
  phaseVariation,
  rationalMagnitude,
  rationalPhase,
  type FactoredRational,
} from './open-loop-phase'
import { bracketedZero, polishCrossings } from './crossing'
import { findRoots, trimLeadingZeros } from './roots'
import type { Complex, Margins, OpenLoop } from './types'

/**
 * With dead time the phase falls without end and L(jω) crosses the negative
 * real axis infinitely often. The search lists crossings up to the frequency
 * (past ten times the highest corner) where |L| has fallen below FADE times
 * the largest |L| at a crossing found so far (later crossings then have gain
 * margins at least 60 dB larger than the smallest one), and never more than
 * MAX_PHASE_CROSSINGS of them.
 */
export const FADE = 1e-3
export const MAX_PHASE_CROSSINGS = 50
/** Phase-isolation intervals are not split below this relative width. */
const REFINE_RELATIVE = 1e-12
/**
 * A candidate crossing with no sign change of its defining quantity nearby is
 * kept only as a touching crossing, where that quantity is this small.
 */
const TOUCHING = 1e-9

interface Crossing {
  w: number
  value: Complex
}

/**
 * Gain margin (dB) at the phase crossovers, where L(jω) lies on the negative
 * real axis, and phase margin (deg) at the gain crossovers, where |L(jω)| = 1,
 * ω > 0, delay exact. For a rational L = N/D (no delay) the candidates are the
 * positive real roots of Im(N(jω)·conj D(jω)) and |N(jω)|² − |D(jω)|²,
 * polynomials in ω² (so none is missed); with a delay θ the gain candidates
 * are the same roots (|e^{−jωθ}| = 1) and the phase crossovers are isolated
 * on intervals where the continuous phase is proved monotone by bounds on
 * each factor's slope. The roots of those polynomials are only as good as
 * their conditioning (at ninth order and beyond they were measured 0.45 %
 * off, and some were no crossing at all), so every candidate is polished on
 * L(jω) itself, ln|L| = 0 or Im L = 0, by a bracketed Brent iteration that
 * cannot leave the neighbourhood of its candidate (crossing.ts), and dropped
 * when no sign change is found there. Where several crossings exist, the one
 * with the smallest margin in magnitude is reported and all are listed.
 */
export function stabilityMargins(openLoop: OpenLoop): Margins {
  const warnings: string[] = []
  const num = trimLeadingZeros(openLoop.num)
  const den = trimLeadingZeros(openLoop.den)
  const factors = factorRational(num, den)
  const at = (w: number) => openLoop.at({ re: 0, im: w })
  const theta = openLoop.delay_s
  const exactRational = theta === 0 || (theta === null && matchesRational(openLoop, num, den, factors))
  const mode: 'rational' | 'delay' | 'sampled' = exactRational ? 'rational' : theta !== null ? 'delay' : 'sampled'

  if (Math.abs(((factors.lowFrequencyPhase % (2 * Math.PI)) + 2 * Math.PI) % (2 * Math.PI) - Math.PI) < 1e-9) {
    warnings.push(
      factors.type === 0
        ? `L(0) = ${formatNumber(num[num.length - 1] / den[den.length - 1])} lies on the negative real axis; crossings at ω = 0 are not counted as phase crossovers.`
        : 'As ω → 0, L(jω) approaches the negative real axis (phase −180°); crossings at ω = 0 are not counted as phase crossovers.',
    )
  }

  let phaseCrossings: Crossing[]
  let gainCrossings: Crossing[]
  if (mode === 'sampled') {
    ;({ phaseCrossings, gainCrossings } = sampledCrossings(at, factors, warnings))
  } else {
    // Candidates from the polynomials (or from the delay's phase), each polished on L(jω) itself.
    gainCrossings = polishCrossings(logMagnitudeOf(at), gainCandidates(num, den), TOUCHING).map((w) => ({ w, value: at(w) }))
    let found: number[]
    if (mode === 'rational') {
      const candidates = phaseCandidates(num, den)
      if (candidates === null) warnings.push('L(jω) is real at every frequency (it lies on the real axis throughout): phase crossovers are not isolated, so no gain margin is given.')
      found = candidates ?? []
    } else found = delayPhaseCrossings(factors, theta as number, warnings)
    phaseCrossings = polishCrossings(phaseSineOf(at), found, TOUCHING)
      .map((w) => ({ w, value: at(w) }))
      .filter((c) => isOnNegativeRealAxis(c.value))
      .slice(0, MAX_PHASE_CROSSINGS)
  }

  const result: Margins = {
    gain_margin_db: null,
    phase_crossover_rad_s: null,
    phase_margin_deg: null,
    gain_crossover_rad_s: null,
    crossings: { phase: phaseCrossings.map((c) => c.w), gain: gainCrossings.map((c) => c.w) },
    warnings,
  }

  if (phaseCrossings.length === 0) {
    if (!warnings.some((w) => w.includes('every frequency'))) {
      warnings.push('L(jω) never crosses the negative real axis for ω > 0 (the phase never reaches −180°): there is no gain margin to state; the gain could rise without bound before the loop lost stability by this route.')
    }
  } else {
    let best: { gm: number; w: number } | null = null
    for (const c of phaseCrossings) {
      const gm = -20 * Math.log10(Math.hypot(c.value.re, c.value.im))
      if (best === null || Math.abs(gm) < Math.abs(best.gm)) best = { gm, w: c.w }
    }
    result.gain_margin_db = best!.gm
    result.phase_crossover_rad_s = best!.w
  }

  if (gainCrossings.length === 0) {
    const above = rationalMagnitude(factors, cornerFrequencies(factors)[0] ?? 1) > 1
    warnings.push(`|L(jω)| never equals 1 for ω > 0 (it stays ${above ? 'above' : 'below'} 0 dB): there is no gain crossover and so no phase margin.`)
  } else {
    let best: { pm: number; w: number } | null = null
    for (const c of gainCrossings) {
      const pm = wrapDegrees(180 + (Math.atan2(c.value.im, c.value.re) * 180) / Math.PI)
      if (best === null || Math.abs(pm) < Math.abs(best.pm)) best = { pm, w: c.w }
    }
    result.phase_margin_deg = best!.pm
    result.gain_crossover_rad_s = best!.w
  }
  return result
}

/** Angle in degrees wrapped into (−180, 180]. */
function wrapDegrees(x: number): number {
  let y = x % 360
  if (y <= -180) y += 360
  if (y > 180) y -= 360
  return y
}

function isOnNegativeRealAxis(v: Complex): boolean {
  return Number.isFinite(v.re) && Number.isFinite(v.im) && v.re < 0 && Math.abs(v.im) <= 1e-6 * Math.abs(v.re)
}

/** Does `at` equal num/den (no hidden delay)? Checked at three frequencies spread over the corners. */
function matchesRational(openLoop: OpenLoop, num: number[], den: number[], factors: FactoredRational): boolean {
  const corners = cornerFrequencies(factors)
  const base = corners.length > 0 ? Math.sqrt(Math.min(...corners) * Math.max(...corners)) : 1
  for (const w of [0.37 * base, 1.3 * base, 4.1 * base]) {
    const exact = openLoop.at({ re: 0, im: w })
    const n = evaluateAtJw(num, w)
    const d = evaluateAtJw(den, w)
    const q = d.re * d.re + d.im * d.im
    const re = (n.re * d.re + n.im * d.im) / q
    const im = (n.im * d.re - n.re * d.im) / q
    if (Math.hypot(exact.re - re, exact.im - im) > 1e-9 * Math.hypot(re, im)) return false
  }
  return true
}

export function evaluateAtJw(p: readonly number[], w: number): Complex {
  let re = 0
  let im = 0
  for (const c of p) {
    const nr = -im * w + c
    im = re * w
    re = nr
  }
  return { re, im }
}

/** Real and imaginary parts of p(jω) as real polynomials in ω, lowest power first. */
function partsInOmega(p: readonly number[]): { re: number[]; im: number[] } {
  const n = p.length - 1
  const re = new Array(n + 1).fill(0)
  const im = new Array(n + 1).fill(0)
  for (let i = 0; i <= n; i++) {
    const k = n - i
    const c = p[i]
    // j^k cycles 1, j, −1, −j.
    if (k % 4 === 0) re[k] += c
    else if (k % 4 === 1) im[k] += c
    else if (k % 4 === 2) re[k] -= c
    else im[k] -= c
  }
  return { re, im }
}

function multiplyLow(a: readonly number[], b: readonly number[]): number[] {
  const out = new Array(a.length + b.length - 1).fill(0)
  for (let i = 0; i < a.length; i++) for (let j = 0; j < b.length; j++) out[i + j] += a[i] * b[j]
  return out
}

function combineLow(a: readonly number[], b: readonly number[], sign: 1 | -1): number[] {
  const out = new Array(Math.max(a.length, b.length)).fill(0)
  a.forEach((c, i) => (out[i] += c))
  b.forEach((c, i) => (out[i] += sign * c))
  return out
}

const absolute = (p: readonly number[]) => p.map(Math.abs)

/**
 * Candidate crossings: the positive real roots ω = √x of a polynomial in
 * x = ω² (lowest power first). `scale` holds, for each coefficient, the sum
 * of the magnitudes of the terms that formed it; a coefficient below 1e-13 of
 * that is rounding left over from cancellation and is taken as zero. Roots
 * within 1e-3 of the real axis are kept: each is confirmed, or dropped, by
 * polishing on L(jω) itself. Null when the polynomial vanishes identically
 * (to rounding).
 */
function positiveRealCandidates(low: readonly number[], scale: readonly number[]): number[] | null {
  const cleaned = low.map((c, k) => (Math.abs(c) <= 1e-13 * scale[k] ? 0 : c))
  if (cleaned.every((c) => c === 0)) return null
  return findRoots(cleaned.reverse())
    .filter((r) => r.re > 0 && Math.abs(r.im) <= 1e-3 * r.re)
    .map((r) => Math.sqrt(r.re))
}

/** Even (ω⁰, ω², …) or odd (ω¹, ω³, …) coefficients of a polynomial in ω, as a polynomial in x = ω². */
function inOmegaSquared(low: readonly number[], odd: boolean): number[] {
  const out: number[] = []
  for (let k = odd ? 1 : 0; k < low.length; k += 2) out.push(low[k])
  return out.length > 0 ? out : [0]
}

/**
 * |N(jω)|² − |D(jω)|² is even in ω: its roots in x = ω² (half the degree,
 * better conditioned) give the gain-crossover candidates.
 */
function gainCandidates(num: number[], den: number[]): number[] {
  const n = partsInOmega(num)
  const d = partsInOmega(den)
  const squares = (p: { re: number[]; im: number[] }, abs: boolean) => {
    const re = abs ? absolute(p.re) : p.re
    const im = abs ? absolute(p.im) : p.im
    return combineLow(multiplyLow(re, re), multiplyLow(im, im), 1)
  }
  const g = combineLow(squares(n, false), squares(d, false), -1)
  const scale = combineLow(squares(n, true), squares(d, true), 1)
  return positiveRealCandidates(inOmegaSquared(g, false), inOmegaSquared(scale, false)) ?? []
}

/**
 * Im(N(jω)·conj D(jω)) = N_im·D_re − N_re·D_im is odd in ω, ω·h(ω²): the
 * roots of h in x = ω² give the phase-crossover candidates (on either half of
 * the real axis). Null when L(jω) is real at every frequency.
 */
function phaseCandidates(num: number[], den: number[]): number[] | null {
  const n = partsInOmega(num)
  const d = partsInOmega(den)
  const g = combineLow(multiplyLow(n.im, d.re), multiplyLow(n.re, d.im), -1)
  const scale = combineLow(multiplyLow(absolute(n.im), absolute(d.re)), multiplyLow(absolute(n.re), absolute(d.im)), 1)
  return positiveRealCandidates(inOmegaSquared(g, true), inOmegaSquared(scale, true))
}

/** ln|L(jω)|: zero at a gain crossover. */
function logMagnitudeOf(at: (w: number) => Complex): (w: number) => number {
  return (w) => {
    const v = at(w)
    return Math.log(Math.hypot(v.re, v.im))
  }
}

/** Im L(jω)/|L(jω)| (the sine of the phase): zero where L(jω) crosses the real axis. */
function phaseSineOf(at: (w: number) => Complex): (w: number) => number {
  return (w) => {
    const v = at(w)
    return v.im / Math.hypot(v.re, v.im)
  }
}

/** Bounds of dφ/dω over [w1, w2] for the rational part minus the delay's θ. */
function slopeBounds(f: FactoredRational, theta: number, w1: number, w2: number): { min: number; max: number } {
  let min = -theta
  let max = -theta
  const add = (re: number, im: number, sign: 1 | -1) => {
    if (re === 0) {
      if (im >= w1 && im <= w2) {
        min = -Infinity
        max = Infinity
      }
      return
    }
    const a = Math.abs(re)
    const nearest = Math.min(Math.max(im, w1), w2)
    const farthest = Math.abs(w1 - im) > Math.abs(w2 - im) ? w1 : w2
    const big = a / ((nearest - im) ** 2 + a * a)
    const small = a / ((farthest - im) ** 2 + a * a)
    // d/dω of the factor's angle is −re/((ω − im)² + re²).
    const direction = sign * (re < 0 ? 1 : -1)
    if (direction > 0) {
      min += small
      max += big
    } else {
      min -= big
      max -= small
    }
  }
  for (const z of f.zeros) add(z.re, z.im, 1)
  for (const p of f.poles) add(p.re, p.im, -1)
  return { min, max }
}

/** Phase crossovers of a rational part times e^{−jωθ}: φ(ω) = φ_rational(ω) − ωθ = −π − 2πk. */
function delayPhaseCrossings(f: FactoredRational, theta: number, warnings: string[]): number[] {
  const phase = (w: number) => rationalPhase(f, w) - theta * w
  const corners = cornerFrequencies(f)
  const low = 1e-4 * Math.min(1 / theta, ...corners)
  const top = 10 * Math.max(1 / theta, ...corners)
  const found: number[] = []
  let largestGain = 0
  const levelsBetween = (a: number, b: number): number[] => {
    // Levels −π − 2πk inside [min(a,b), max(a,b)].
    const lo = Math.min(a, b)
    const hi = Math.max(a, b)
    const out: number[] = []
    for (let k = Math.ceil((-Math.PI - hi) / (2 * Math.PI)); -Math.PI - 2 * Math.PI * k >= lo; k++) out.push(-Math.PI - 2 * Math.PI * k)
    return out
  }
  const isolate = (w1: number, w2: number, p1: number, p2: number, depth: number): void => {
    if (found.length >= MAX_PHASE_CROSSINGS) return
    const variation = phaseVariation(f, w1, w2)
    const fall = variation.fall + theta * (w2 - w1)
    const rise = variation.rise
    const lowest = Math.max(p1 - fall, p2 - rise)
    const highest = Math.min(p1 + rise, p2 + fall)
    if (levelsBetween(lowest, highest).length === 0) return
    const slope = slopeBounds(f, theta, w1, w2)
    const monotone = slope.max < 0 || slope.min > 0
    if (monotone || depth >= 60 || w2 - w1 <= REFINE_RELATIVE * w2) {
      for (const level of levelsBetween(p1, p2)) {
        const w = bracketedZero((x) => phase(x) - level, w1, w2)
        if (w !== null && !found.some((x) => Math.abs(x - w) <= 1e-9 * w)) found.push(w)
      }
      return
    }
    const mid = Math.sqrt(w1 * w2)
    const pm = phase(mid)
    isolate(w1, mid, p1, pm, depth + 1)
    isolate(mid, w2, pm, p2, depth + 1)
  }
  const step = 10 ** 0.25
  let w1 = low
  let p1 = phase(w1)
  for (let guard = 0; guard < 400; guard++) {
    const w2 = w1 * step
    const p2 = phase(w2)
    const before = found.length
    isolate(w1, w2, p1, p2, 0)
    found.sort((a, b) => a - b)
    for (let i = before; i < found.length; i++) largestGain = Math.max(largestGain, rationalMagnitude(f, found[i]))
    if (found.length >= MAX_PHASE_CROSSINGS) {
      warnings.push(`With the dead time the phase keeps falling and L(jω) crosses the negative real axis without end; the first ${MAX_PHASE_CROSSINGS} crossings are listed.`)
      break
    }
    if (w2 > top && largestGain > 0 && rationalMagnitude(f, w2) < FADE * largestGain) break
    if (w2 > 1e6 * top) break
    w1 = w2
    p1 = p2
  }
  return found.sort((a, b) => a - b).slice(0, MAX_PHASE_CROSSINGS)
}

/**
 * Loops whose delay is not one factor e^{−sθ} (e.g. a dead time inside an
 * inner loop): L is known only through `at`. Walked upwards in ω with steps
 * bounded by the local rate of change of phase (at most 20° a step) and of
 * ln|L| (0.2 a step), the phase unwrapped along the walk, so no crossing of
 * −180° (mod 360°) or of 0 dB hides between samples unless the curve turns
 * sharply within one such step; crossings are bisected on `at` itself.
 */
function sampledCrossings(at: (w: number) => Complex, f: FactoredRational, warnings: string[]): { phaseCrossings: Crossing[]; gainCrossings: Crossing[] } {
  const corners = cornerFrequencies(f)
  const low = 1e-4 * (corners.length > 0 ? Math.min(...corners) : 1)
  const top = 10 * (corners.length > 0 ? Math.max(...corners) : 1)
  const logMagnitude = (v: Complex) => Math.log(Math.hypot(v.re, v.im))
  const phaseCrossings: Crossing[] = []
  const gainCrossings: Crossing[] = []
  let largestGain = 0
  let w1 = low
  let v1 = at(w1)
  let p1 = nearestBranch(v1, rationalPhase(f, w1))
  for (let guard = 0; guard < 200_000; guard++) {
    const w2 = nextSample(at, w1, 10 ** 0.05)
    const v2 = at(w2)
    const p2 = nearestBranch(v2, p1)
    const anchor = { w: w1, p: p1 }
    // Phase inside the step, unwrapped against its left end (the turn is below 20°).
    const phaseAt = (x: number) => nearestBranch(at(x), anchor.p + ((p2 - anchor.p) * (x - anchor.w)) / (w2 - anchor.w))
    const lo = Math.min(p1, p2)
    const hi = Math.max(p1, p2)
    for (let k = Math.ceil((-Math.PI - hi) / (2 * Math.PI)); -Math.PI - 2 * Math.PI * k >= lo; k++) {
      const level = -Math.PI - 2 * Math.PI * k
      const w = bracketedZero((x) => phaseAt(x) - level, w1, w2)
      if (w !== null) {
        const value = at(w)
        phaseCrossings.push({ w, value })
        largestGain = Math.max(largestGain, Math.hypot(value.re, value.im))
      }
    }
    if (Math.sign(logMagnitude(v1)) !== Math.sign(logMagnitude(v2))) {
      const w = bracketedZero((x) => logMagnitude(at(x)), w1, w2)
      if (w !== null) gainCrossings.push({ w, value: at(w) })
    }
    if (phaseCrossings.length >= MAX_PHASE_CROSSINGS) {
      warnings.push(`L(jω) crosses the negative real axis again and again (dead time); the first ${MAX_PHASE_CROSSINGS} crossings are listed.`)
      break
    }
    const magnitude = Math.hypot(v2.re, v2.im)
    if (w2 > top && ((largestGain > 0 && magnitude < FADE * largestGain) || (largestGain === 0 && magnitude < 1e-6))) break
    w1 = w2
    v1 = v2
    p1 = p2
  }
  return { phaseCrossings: phaseCrossings.slice(0, MAX_PHASE_CROSSINGS), gainCrossings }
}

function formatNumber(x: number): string {
  return Number.isInteger(x) ? String(x) : x.toPrecision(6).replace(/\.?0+($|e)/, '$1')
}


import { findRoots, trimLeadingZeros } from './roots'

/**
 * The phase of a rational L(jω) = k·Π(jω − z)/Π(jω − p) as a sum of one
 * continuous angle per factor, so it is exact and continuous in ω without any
 * unwrapping of sampled values. Each factor's angle is monotone in ω
 * (increasing for a root in the left half-plane, decreasing in the right), a
 * fact the margin search uses to rule out crossings between samples.
 */
export interface FactoredRational {
  /** Ratio of the leading coefficients. */
  gain: number
  zeros: Array<{ re: number; im: number }>
  poles: Array<{ re: number; im: number }>
  /** Count of poles minus zeros at the origin (the loop's type). */
  type: number
  /** Phase of the low-frequency asymptote c·(jω)^(−type), radians, in (−270°, 90°] (the usual Bode reading). */
  lowFrequencyPhase: number
  /** The shift in multiples of 2π that puts the continuous sum on that reading. */
  offset: number
}

export function factorRational(num: number[], den: number[]): FactoredRational {
  const n = trimLeadingZeros(num)
  const d = trimLeadingZeros(den)
  const zeros = findRoots(n)
  const poles = findRoots(d)
  const atOrigin = (roots: Array<{ re: number; im: number }>) => roots.filter((r) => r.re === 0 && r.im === 0).length
  const type = atOrigin(poles) - atOrigin(zeros)
  // Low-frequency asymptote: lowest non-zero coefficients.
  const lowest = (p: number[]) => {
    for (let i = p.length - 1; i >= 0; i--) {
      const c = p[i]!
      if (c !== 0) return c
    }
    return 0
  }
  const c = lowest(n) / lowest(d)
  // Integrators read as −90° each, a negative gain as −180° (the usual Bode reading);
  // a net differentiator reads as +90°.
  let lowFrequencyPhase = (c < 0 ? -Math.PI : 0) - (type * Math.PI) / 2
  while (lowFrequencyPhase <= (-3 * Math.PI) / 2 - 1e-12) lowFrequencyPhase += 2 * Math.PI
  while (lowFrequencyPhase > Math.PI / 2 + 1e-12) lowFrequencyPhase -= 2 * Math.PI
  const factored: FactoredRational = { gain: n[0]! / d[0]!, zeros, poles, type, lowFrequencyPhase, offset: 0 }
  // The sum's own value as ω → 0⁺, then the 2π shift onto the reading above.
  const tiny = 1e-300
  const raw = rawPhase(factored, tiny)
  factored.offset = 2 * Math.PI * Math.round((lowFrequencyPhase - raw) / (2 * Math.PI))
  return factored
}

/** Continuous angle of (jω − r): atan2(ω − b, −a) taken on the branch that is continuous in ω. */
export function factorAngle(re: number, im: number, w: number): number {
  const x = -re
  const y = w - im
  if (x > 0) return Math.atan(y / x)
  if (x < 0) return Math.PI - Math.atan(y / -x)
  return y > 0 ? Math.PI / 2 : y < 0 ? -Math.PI / 2 : 0
}

function rawPhase(f: FactoredRational, w: number): number {
  let phase = f.gain < 0 ? -Math.PI : 0
  for (const z of f.zeros) phase += factorAngle(z.re, z.im, w)
  for (const p of f.poles) phase -= factorAngle(p.re, p.im, w)
  return phase
}

/** Phase of the rational part at ω > 0, radians, continuous in ω. */
export function rationalPhase(f: FactoredRational, w: number): number {
  return rawPhase(f, w) + f.offset
}

/**
 * Increase of the increasing factors and decrease of the decreasing ones over
 * [w1, w2] (both ≥ 0), radians. Roots on the imaginary axis contribute a step
 * only where their frequency lies inside; they are counted on both sides.
 */
export function phaseVariation(f: FactoredRational, w1: number, w2: number): { rise: number; fall: number } {
  let rise = 0
  let fall = 0
  const add = (re: number, im: number, sign: 1 | -1) => {
    const change = sign * (factorAngle(re, im, w2) - factorAngle(re, im, w1))
    if (re === 0) {
      if (im >= w1 && im <= w2) {
        rise += Math.PI
        fall += Math.PI
      }
      return
    }
    if (change >= 0) rise += change
    else fall -= change
  }
  for (const z of f.zeros) add(z.re, z.im, 1)
  for (const p of f.poles) add(p.re, p.im, -1)
  return { rise, fall }
}

/** |L(jω)| of the rational part by its factors (no overflow of high powers). */
export function rationalMagnitude(f: FactoredRational, w: number): number {
  let logMagnitude = Math.log(Math.abs(f.gain))
  for (const z of f.zeros) logMagnitude += Math.log(Math.hypot(z.re, w - z.im))
  for (const p of f.poles) logMagnitude -= Math.log(Math.hypot(p.re, w - p.im))
  return Math.exp(logMagnitude)
}

/** The corner frequencies of the factors (non-zero root magnitudes), rad/s. */
export function cornerFrequencies(f: FactoredRational): number[] {
  return [...f.zeros, ...f.poles].map((r) => Math.hypot(r.re, r.im)).filter((m) => m > 0)
}

/** Largest phase turn allowed between two samples of `at` (20°): far from the 180° where unwrapping turns ambiguous. */
export const MAX_TURN = Math.PI / 9

/**
 * Rates of change of phase and of ln|L| at ω, from L(ω(1 + 1e-7))/L(ω(1 − 1e-7))
 * (a ratio so close to 1 that its angle is never ambiguous).
 */
export function localRates(at: (w: number) => { re: number; im: number }, w: number): { phase: number; logMagnitude: number } {
  const delta = 1e-7 * w
  const a = at(w + delta)
  const b = at(w - delta)
  const q = b.re * b.re + b.im * b.im
  const re = (a.re * b.re + a.im * b.im) / q
  const im = (a.im * b.re - a.re * b.im) / q
  return { phase: Math.atan2(im, re) / (2 * delta), logMagnitude: Math.log(Math.hypot(re, im)) / (2 * delta) }
}

/**
 * Next frequency after w for a walk along L(jω) known only through `at`: the
 * step keeps the local phase turn within MAX_TURN and the change of ln|L|
 * within 0.2, and never exceeds the ratio `maxRatio`.
 */
export function nextSample(at: (w: number) => { re: number; im: number }, w: number, maxRatio: number): number {
  const rates = localRates(at, w)
  const bound = Math.min(MAX_TURN / Math.max(Math.abs(rates.phase), 1e-300), 0.2 / Math.max(Math.abs(rates.logMagnitude), 1e-300))
  return Math.min(w * maxRatio, w + Math.max(bound, 1e-9 * w))
}

/** Unwrap the angle of v onto the branch nearest `reference` (radians). */
export function nearestBranch(v: { re: number; im: number }, reference: number): number {
  const raw = Math.atan2(v.im, v.re)
  return raw + 2 * Math.PI * Math.round((reference - raw) / (2 * Math.PI))
}

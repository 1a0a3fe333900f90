import { stabilityMargins } from './margins'
import { cornerFrequencies, factorRational, nearestBranch, nextSample, rationalMagnitude, rationalPhase } from './open-loop-phase'
import type { Complex, FrequencyResponse, Margins, OpenLoop } from './types'

/** Points of the Bode plot unless the caller asks otherwise. */
export const DEFAULT_POINTS = 400

/**
 * Open-loop frequency response for the Bode plot. The range runs a decade
 * below the lowest and a decade above the highest of: the corner frequencies
 * of the rational part, 1/θ of the dead time, and every crossover the margins
 * found, rounded out to whole decades. With a single dead time the phase is
 * the sum of one continuous angle per factor minus ωθ (exact, continuous, no
 * unwrapping); for other structures `at` is sampled and unwrapped, with extra
 * points wherever neighbours differ by more than 30°.
 */
export function frequencyResponse(openLoop: OpenLoop, points = DEFAULT_POINTS, known?: Margins): FrequencyResponse {
  const factors = factorRational(openLoop.num, openLoop.den)
  // The caller's margins of the same loop, when it has them, spare a second search.
  const margins = known ?? stabilityMargins(openLoop)
  const marks = [...cornerFrequencies(factors), ...margins.crossings.gain, ...margins.crossings.phase.slice(0, 3)]
  if (openLoop.delay_s) marks.push(1 / openLoop.delay_s)
  const positive = marks.filter((w) => w > 0 && Number.isFinite(w))
  const lowest = positive.length > 0 ? Math.min(...positive) : 1
  const highest = positive.length > 0 ? Math.max(...positive) : 1
  const from = Math.floor(Math.log10(lowest) - 1)
  const to = Math.ceil(Math.log10(highest) + 1)
  const count = Math.max(2, Math.floor(points))
  const w = Array.from({ length: count }, (_, i) => 10 ** (from + ((to - from) * i) / (count - 1)))

  const theta = openLoop.delay_s
  if (theta !== null) {
    return {
      w,
      magnitude_db: w.map((x) => 20 * Math.log10(rationalMagnitude(factors, x))),
      phase_deg: w.map((x) => ((rationalPhase(factors, x) - theta * x) * 180) / Math.PI),
    }
  }
  // Sampled: walk from each grid point to the next with steps bounded by the
  // local rate of change of phase, unwrapping as it goes.
  const at = (x: number): Complex => openLoop.at({ re: 0, im: x })
  const phase: number[] = []
  // Start on the branch the rational part (the Padé form when a delay is hidden) gives at the lowest frequency.
  let previous = nearestBranch(at(w[0]!), rationalPhase(factors, w[0]!))
  phase.push(previous)
  for (let i = 1; i < count; i++) {
    let x = w[i - 1]!
    while (x < w[i]!) {
      x = Math.min(w[i]!, nextSample(at, x, w[i]! / w[i - 1]!))
      previous = nearestBranch(at(x), previous)
    }
    phase.push(previous)
  }
  return {
    w,
    magnitude_db: w.map((x) => {
      const v = at(x)
      return 20 * Math.log10(Math.hypot(v.re, v.im))
    }),
    phase_deg: phase.map((p) => (p * 180) / Math.PI),
  }
}

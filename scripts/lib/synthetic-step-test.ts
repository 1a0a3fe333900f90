/**
 * Invented step-test records for the tests, the bench and the demo: the exact
 * step response of a known first-order-plus-dead-time model, sampled, with
 * seeded Gaussian noise on the process value (mulberry32 through Box–Muller),
 * so a fit can be held to the model it should recover. Never field data.
 */
import { seededRandom } from '../../tests/calc/random-loops'

export interface SyntheticStepTest {
  gain: number
  timeConstant: number
  deadTime: number
  /** Seconds between samples, samples in all, and the time of the step. */
  sampleTime: number
  samples: number
  stepTime: number
  outputBefore: number
  outputAfter: number
  baseline: number
  /** Standard deviation of the noise on the process value. */
  noise: number
  seed: number
}

/**
 * The tests' invented plant (the engine's fit tests and the server's upload and fit): K = 1.8 (L/h)/%, τ = 12 s,
 * θ = 3.5 s, sampled every 0.2 s for 120 s, stepped 40 → 50 % at 10 s, noise σ = 0.15 L/h (0.8 % of the change of
 * 18 L/h). A test changes what it needs with a spread (`{ ...sampleStepTest, noise: 0 }`).
 */
export const sampleStepTest: SyntheticStepTest = {
  gain: 1.8,
  timeConstant: 12,
  deadTime: 3.5,
  sampleTime: 0.2,
  samples: 600,
  stepTime: 10,
  outputBefore: 40,
  outputAfter: 50,
  baseline: 20,
  noise: 0.15,
  seed: 11,
}

/** Standard normal deviates from a uniform generator (Box–Muller). */
function gaussian(rnd: () => number): () => number {
  return () => {
    const u = 1 - rnd()
    const v = rnd()
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v)
  }
}

export function syntheticRows(spec: SyntheticStepTest): Array<[number, number, number]> {
  const normal = gaussian(seededRandom(spec.seed))
  const change = spec.outputAfter - spec.outputBefore
  const rows: Array<[number, number, number]> = []
  for (let i = 0; i < spec.samples; i++) {
    const t = i * spec.sampleTime
    const stepped = t >= spec.stepTime
    const since = t - spec.stepTime - spec.deadTime
    const response = since > 0 ? spec.gain * change * (1 - Math.exp(-since / spec.timeConstant)) : 0
    rows.push([t, stepped ? spec.outputAfter : spec.outputBefore, spec.baseline + response + spec.noise * normal()])
  }
  return rows
}

/** The record as CSV with a header row; `comment` lines (each prefixed "# ") go first. */
export function syntheticStepCsv(spec: SyntheticStepTest, header = 'time (s),controller output (%),flow (L/h)', comment: string[] = []): string {
  const lines = comment.map((c) => `# ${c}`)
  lines.push(header)
  for (const [t, u, y] of syntheticRows(spec)) lines.push(`${Number(t.toFixed(6))},${u},${y.toFixed(4)}`)
  return `${lines.join('\n')}\n`
}

/**
 * Shapes shared by the engine's files. The algebra (expression, polynomial,
 * reduce, steps) produces exact transfer functions; the numerics (roots,
 * routh, step, frequency, margins, stability-range) take plain numbers.
 * Coefficient arrays are always listed from the highest power of s down.
 */

export interface Complex {
  re: number
  im: number
}

/** A pole or zero as the result lists it; damping and natural frequency for every root. */
export interface Root extends Complex {
  /** ζ = −Re/|p| (1 for a real root in the left half-plane, −1 in the right, null at the origin). */
  damping: number | null
  /** ωn = |p| in rad/s. */
  natural_frequency_rad_s: number
}

export type Stability = 'stable' | 'marginal' | 'unstable'

export interface RouthResult {
  /** Numbers; where ε replaced a zero first element the row holds the value with ε → 0⁺ taken at 1e-9 of the row's scale and `epsilon_rows` names it. */
  rows: number[][]
  first_column: number[]
  sign_changes: number
  special_case: 'none' | 'zero_first_element' | 'zero_row'
  /** Indexes of rows where ε was put in (zero first element). */
  epsilon_rows: number[]
  /** Indexes of rows that were replaced by the derivative of the auxiliary polynomial. */
  auxiliary_rows: number[]
  /** Plain sentences for the derivation and the sheet. */
  notes: string[]
}

export interface StepMetrics {
  final_value: number | null
  overshoot_pct: number | null
  peak_time_s: number | null
  rise_time_s: number | null
  settling_time_s: number | null
}

export interface StepResponse {
  metrics: StepMetrics
  /** Sampled response for the plot: time in s and output, same length (≤ 600 points). */
  t: number[]
  y: number[]
  warnings: string[]
}

export interface Margins {
  gain_margin_db: number | null
  phase_crossover_rad_s: number | null
  phase_margin_deg: number | null
  gain_crossover_rad_s: number | null
  crossings: { phase: number[]; gain: number[] }
  warnings: string[]
}

/** Open-loop frequency response for the plot (Bode form). */
export interface FrequencyResponse {
  w: number[]
  magnitude_db: number[]
  /** Phase in degrees, unwrapped so the curve is continuous. */
  phase_deg: number[]
}

/**
 * What the numerics need of an open loop: its rational part as numbers, the
 * total dead time where the loop is a rational part times e^(−sθ), and an
 * evaluator of L(jω) with the exact delay for any structure (cascades with
 * delay inside an inner loop are not of that simple form).
 */
export interface OpenLoop {
  num: number[]
  den: number[]
  /** θ in s when L(s) = num/den · e^(−sθ) exactly; null when the structure has no such form. */
  delay_s: number | null
  /** L(s) at any complex s, delays exact. */
  at: (s: Complex) => Complex
}

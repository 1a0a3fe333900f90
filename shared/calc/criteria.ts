import { type CriterionName, type LoopFile, criterionBounds } from '../schemas/loop'
import type { Margins, Stability, StepMetrics } from './types'

/**
 * Acceptance criteria: each one a row with its limit, the computed value and
 * pass or fail. A margin that does not exist on a stable loop (L never
 * reaches −180° or the unit circle) is unbounded and passes; anything on an
 * unstable or marginal loop fails.
 */
export interface CriterionRow {
  name: CriterionName
  bound: 'min' | 'max'
  limit: number
  value: number | null
  pass: boolean
}

/** What the criteria are judged on, for the nominal loop or one tolerance corner. */
export interface Performance {
  stability: Stability
  margins: Pick<Margins, 'gain_margin_db' | 'phase_margin_deg'> | null
  step: StepMetrics | null
  steady_state_error: { step: number | null; ramp: number | null }
}

export function criterionValue(name: CriterionName, p: Performance): number | null {
  switch (name) {
    case 'phase_margin_deg':
      return p.margins?.phase_margin_deg ?? null
    case 'gain_margin_db':
      return p.margins?.gain_margin_db ?? null
    case 'overshoot_pct':
      return p.step?.overshoot_pct ?? null
    case 'settling_time_s':
      return p.step?.settling_time_s ?? null
    case 'rise_time_s':
      return p.step?.rise_time_s ?? null
    case 'steady_state_error_step':
      return p.steady_state_error.step === null ? null : Math.abs(p.steady_state_error.step)
    case 'steady_state_error_ramp':
      return p.steady_state_error.ramp === null ? null : Math.abs(p.steady_state_error.ramp)
  }
}

export function criterionPasses(name: CriterionName, limit: number, value: number | null, p: Performance): boolean {
  if (p.stability !== 'stable') return false
  if (value === null) return (name === 'phase_margin_deg' || name === 'gain_margin_db') && p.margins !== null
  return criterionBounds[name] === 'min' ? value >= limit : value <= limit
}

export function criteriaRows(criteria: LoopFile['criteria'], p: Performance): CriterionRow[] {
  return (Object.keys(criteria) as CriterionName[]).map((name) => {
    const bound = criterionBounds[name]
    const limit = criteria[name]![bound]!
    const value = criterionValue(name, p)
    return { name, bound, limit, value, pass: criterionPasses(name, limit, value, p) }
  })
}

/** Which of two values is worse for a criterion (null, a missing value, is worst unless the margin is unbounded). */
export function worseValue(name: CriterionName, a: number | null, b: number | null): boolean {
  if (a === null) return b !== null && !(name === 'phase_margin_deg' || name === 'gain_margin_db')
  if (b === null) return name === 'phase_margin_deg' || name === 'gain_margin_db'
  return criterionBounds[name] === 'min' ? a < b : a > b
}

/** The criteria that need the step response, or the margins, so corners compute only what is judged. */
export const STEP_CRITERIA: ReadonlySet<CriterionName> = new Set(['overshoot_pct', 'settling_time_s', 'rise_time_s'])
export const MARGIN_CRITERIA: ReadonlySet<CriterionName> = new Set(['phase_margin_deg', 'gain_margin_db'])

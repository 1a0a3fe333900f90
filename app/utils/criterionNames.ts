import type { CriterionName } from '#shared/schemas/loop'

/** The words and unit the screens use for each acceptance criterion of calc-contract.md. */
export const criterionNames: Record<CriterionName, { label: string; unit: string }> = {
  phase_margin_deg: { label: 'Phase margin', unit: '°' },
  gain_margin_db: { label: 'Gain margin', unit: 'dB' },
  overshoot_pct: { label: 'Overshoot', unit: '%' },
  settling_time_s: { label: 'Settling time (±2 %)', unit: 's' },
  rise_time_s: { label: 'Rise time (10 % to 90 %)', unit: 's' },
  steady_state_error_step: { label: 'Steady-state error, unit step', unit: '' },
  steady_state_error_ramp: { label: 'Steady-state error, unit ramp', unit: '' },
}

export const boundWords = { min: 'at least', max: 'at most' } as const

/**
 * Runs the independent reference (tests/calc/reference/reference.py, Debian's
 * python3-sympy, python3-numpy and python3-scipy) once over many loop files.
 * Debian's interpreter is called by its full path: the python3 first on PATH
 * may be another installation without those packages.
 */
import { spawnSync } from 'node:child_process'
import { existsSync } from 'node:fs'
import { fileURLToPath } from 'node:url'

export const DEBIAN_PYTHON = '/usr/bin/python3'
const SCRIPT = fileURLToPath(new URL('./reference/reference.py', import.meta.url))

export interface RefRoot {
  re: number
  im: number
  multiplicity: number
}
export interface RefMargins {
  gain_margin_db: number | null
  phase_crossover_rad_s: number | null
  phase_margin_deg: number | null
  gain_crossover_rad_s: number | null
  crossings: { phase: number[]; gain: number[] }
}
export interface RefStep {
  final_value: number
  overshoot_pct: number
  peak_time_s: number | null
  rise_time_s: number
  settling_time_s: number
}
export interface RefResult {
  error?: string
  trace?: string
  closed_loop: { num: number[]; den: number[] }
  open_loop: { num: number[]; den: number[] } | null
  order: { num: number; den: number }
  poles: RefRoot[]
  zeros: RefRoot[]
  stability: 'stable' | 'marginal' | 'unstable'
  routh: { sign_changes: number }
  dc_gain: number | null
  steady_state_error: { step: number; ramp: number | null } | null
  margins: RefMargins | null
  step: RefStep | null
  reference: {
    /** Coefficient scales: the same reduction on coefficient magnitudes, signs all +, divided by |den[0]|. */
    closed_loop_scale: { num: number[]; den: number[] }
    open_loop_scale?: { num: number[]; den: number[] }
    /** L = R(s)·e^(−sθ) where every dead time of the loop is a series factor: R without Padé and θ; null otherwise. */
    open_loop_rational?: { num: number[]; den: number[]; delay_s: number; scale: { num: number[]; den: number[] } } | null
    roots_vs_mpmath: number
    verdict_clear: boolean
    imaginary_axis_roots: number
    has_delay: boolean
    margins?: { gain_clear: boolean; gain_why: string; phase_clear: boolean; phase_why: string; band: [number, number] }
    step?: {
      rise_clear: boolean
      settling_clear: boolean
      peak_clear: boolean
      overshoot_clear: boolean
      resolved: boolean
      why: string[]
      vs_scipy_step: number
    }
  }
}

/** The reference's results, one per loop, in order; throws with a clear message when Debian's packages are missing. */
export function runReference(loops: unknown[], options: { only?: 'roots' } = {}): RefResult[] {
  if (!existsSync(DEBIAN_PYTHON))
    throw new Error(`${DEBIAN_PYTHON} is missing: apt-get install python3 python3-sympy python3-numpy python3-scipy`)
  const args = [SCRIPT, ...(options.only ? [`--only=${options.only}`] : [])]
  const run = spawnSync(DEBIAN_PYTHON, args, {
    input: JSON.stringify(loops),
    encoding: 'utf8',
    maxBuffer: 512 * 1024 * 1024,
    timeout: 170_000,
  })
  if (run.error) throw new Error(`the reference did not run: ${run.error.message}`)
  if (run.status === 3) throw new Error(`Debian's python3 lacks a package the reference needs.\n${run.stderr}`)
  if (run.status !== 0) throw new Error(`the reference failed (exit ${run.status}):\n${run.stderr.slice(-4000)}`)
  const results = JSON.parse(run.stdout) as RefResult[]
  if (results.length !== loops.length) throw new Error(`the reference answered ${results.length} loops of ${loops.length}`)
  return results
}

import type { CriterionName, LoopFile } from '../schemas/loop'
import type { LoopParameters } from './blocks'
import { type CriterionRow, MARGIN_CRITERIA, type Performance, STEP_CRITERIA, criteriaRows, worseValue } from './criteria'
import type { Deadline } from './errors'
import type { NumericBlock } from './evaluate'
import { stabilityMargins } from './margins'
import { normalised } from './open-loop'
import { trimNumbers } from './polynomial'
import { polynomialRoots } from './roots'
import { routhArray } from './routh'
import { stabilityVerdict } from './stability'
import { steadyStateErrorsApprox } from './steady-state'
import { stepResponse } from './step'
import type { OpenLoop, Stability } from './types'

/**
 * Every combination of the parameters' min/max (parameters without a band stay
 * at their values). Each corner substitutes numbers into the already-reduced
 * exact polynomials (compiled once), never reduces again, and computes only
 * what the criteria judge.
 */
export interface CornerModel {
  closedNum: (values: ArrayLike<number>) => number[]
  closedDen: (values: ArrayLike<number>) => number[]
  numericBlocks: (values: ArrayLike<number>) => Map<string, NumericBlock>
  openLoop: ((values: ArrayLike<number>, numeric: ReadonlyMap<string, NumericBlock>) => OpenLoop) | null
}

export interface Corner {
  values: Record<string, number>
  stability: Stability
  criteria: CriterionRow[]
}

export interface ToleranceCorners {
  count: number
  all_stable: boolean
  unstable_count: number
  /** The parameters that vary, with their bands. */
  parameters: Array<{ symbol: string; min: number; max: number }>
  /** For each criterion the corner where it comes out worst. */
  worst: Partial<Record<CriterionName, { corner: Record<string, number>; value: number | null; pass: boolean }>>
  /** Every corner, listed up to 256 corners. */
  corners: Corner[] | null
}

const LISTED_CORNERS = 256

export function toleranceCorners(loop: LoopFile, parameters: LoopParameters, model: CornerModel, deadline: Deadline): ToleranceCorners {
  const banded = parameters.symbols
    .map((symbol, index) => {
      const p = loop.parameters[symbol]!
      return { symbol, index, min: p.min ?? p.value, max: p.max ?? p.value }
    })
    .filter((b) => b.min !== b.max)
  const names = Object.keys(loop.criteria) as CriterionName[]
  const needStep = names.some((n) => STEP_CRITERIA.has(n))
  const needMargins = names.some((n) => MARGIN_CRITERIA.has(n))
  const count = 2 ** banded.length
  const corners: Corner[] = []
  const worst: ToleranceCorners['worst'] = {}
  let unstable = 0
  const values = Float64Array.from(parameters.values)

  for (let mask = 0; mask < count; mask++) {
    deadline.check('the tolerance corners')
    const cornerValues: Record<string, number> = {}
    banded.forEach((b, bit) => {
      values[b.index] = mask & (1 << bit) ? b.max : b.min
      cornerValues[b.symbol] = values[b.index]!
    })
    const ascendingDen = model.closedDen(values)
    const ascendingNum = model.closedNum(values)
    const den = trimNumbers([...ascendingDen].reverse())
    let stability: Stability = 'unstable'
    let performance: Performance = { stability, margins: null, step: null, steady_state_error: { step: null, ramp: null } }
    if (den.length > 1 || den[0] !== 0) {
      const poles = polynomialRoots(den)
      stability = stabilityVerdict(den, routhArray(den), poles)
      const margins = needMargins && model.openLoop ? stabilityMargins(model.openLoop(values, model.numericBlocks(values))) : null
      const num = trimNumbers([...ascendingNum].reverse())
      let step = null
      if (needStep && stability === 'stable' && num.length <= den.length) {
        const t = normalised(num, den)
        step = stepResponse(t.num, t.den, { deadline: deadline.at, limitMs: deadline.limitMs, poles, plot: false }).metrics
      }
      performance = { stability, margins, step, steady_state_error: stability === 'stable' ? steadyStateErrorsApprox(ascendingNum, ascendingDen) : { step: null, ramp: null } }
    }
    if (stability !== 'stable') unstable++
    const rows = criteriaRows(loop.criteria, performance)
    for (const row of rows) {
      const current = worst[row.name]
      if (!current || (current.pass && !row.pass) || (current.pass === row.pass && worseValue(row.name, row.value, current.value)))
        worst[row.name] = { corner: { ...cornerValues }, value: row.value, pass: row.pass }
    }
    if (count <= LISTED_CORNERS) corners.push({ values: cornerValues, stability, criteria: rows })
  }
  return {
    count,
    all_stable: unstable === 0,
    unstable_count: unstable,
    parameters: banded.map(({ symbol, min, max }) => ({ symbol, min, max })),
    worst,
    corners: count <= LISTED_CORNERS ? corners : null,
  }
}

import { trimLeadingZeros } from './roots'
import type { RouthResult } from './types'

/**
 * Relative size below which a computed Routh element counts as zero: the
 * element is a difference of two products divided by the pivot, and it is
 * zero when it is smaller than ZERO_TOLERANCE times the larger of those two
 * products over the pivot (the terms it was formed from, so the test scales
 * with its row). Rounding in the rows above leaves residues of a few ulps
 * times the row count; 1e-9 sits far above those and far below any element
 * that matters to a verdict.
 */
export const ZERO_TOLERANCE = 1e-9

/** ε → 0⁺ is taken as EPSILON_FRACTION of the largest magnitude in the row it enters. */
export const EPSILON_FRACTION = 1e-9

/**
 * The Routh array of a real polynomial (coefficients highest power first).
 * Special cases as in the standard texts (e.g. Nise, "Control Systems
 * Engineering", ch. 6; Ogata, "Modern Control Engineering", ch. 5): a zero
 * first element in an otherwise non-zero row is replaced by ε → 0⁺; a row of
 * zeros is replaced by the coefficients of the derivative of the auxiliary
 * polynomial formed from the row above. The sign changes of the first column
 * (ε positive and small) count the roots in the right half-plane.
 */
export function routhArray(coefficients: number[]): RouthResult {
  const a = trimLeadingZeros(coefficients)
  const n = a.length - 1
  const rows: number[][] = []
  const epsilonRows: number[] = []
  const auxiliaryRows: number[] = []
  const notes: string[] = []
  const width = (power: number) => Math.floor(power / 2) + 1
  const label = (k: number) => `s^${n - k}`

  rows.push(Array.from({ length: width(n) }, (_, j) => a[2 * j]!))
  if (n >= 1) rows.push(Array.from({ length: width(n - 1) }, (_, j) => a[2 * j + 1] ?? 0))

  const fixRow = (k: number): void => {
    const row = rows[k]!
    if (row[0] !== 0) return
    if (isZeroRow(row)) {
      const above = rows[k - 1]!
      const power = n - k + 1
      const auxiliary = above
        .map((c, j) => monomial(c, power - 2 * j))
        .join(' + ')
        .replace(/\+ -/g, '− ')
      for (let j = 0; j < row.length; j++) row[j] = (power - 2 * j) * (above[j] ?? 0)
      auxiliaryRows.push(k)
      notes.push(
        `Row ${label(k)} is all zeros: it is replaced by the derivative of the auxiliary polynomial A(s) = ${auxiliary} from row ${label(k - 1)}; the roots of A(s) lie symmetrically about the origin and are roots of the characteristic polynomial.`,
      )
      if (row[0] !== 0) return
    }
    const scale = Math.max(...row.map(Math.abs))
    row[0] = EPSILON_FRACTION * (scale > 0 ? scale : 1)
    epsilonRows.push(k)
    notes.push(`Row ${label(k)} starts with 0: the 0 is replaced by ε → 0⁺ (taken as ${formatNumber(row[0])}) and the signs below read in that limit.`)
  }

  if (n >= 1) fixRow(1)
  for (let k = 2; k <= n; k++) {
    const upper = rows[k - 2]!
    const lower = rows[k - 1]!
    const pivot = lower[0]!
    const row: number[] = []
    for (let j = 0; j < width(n - k); j++) {
      const left = pivot * (upper[j + 1] ?? 0)
      const right = upper[0]! * (lower[j + 1] ?? 0)
      const value = (left - right) / pivot
      const scale = Math.max(Math.abs(left), Math.abs(right)) / Math.abs(pivot)
      row.push(Math.abs(value) <= ZERO_TOLERANCE * scale ? 0 : value)
    }
    rows.push(row)
    fixRow(k)
  }

  const firstColumn = rows.map((r) => r[0]!)
  let signChanges = 0
  for (let k = 1; k < firstColumn.length; k++) {
    if (Math.sign(firstColumn[k]!) !== Math.sign(firstColumn[k - 1]!)) signChanges++
  }
  notes.push(
    signChanges === 0
      ? 'The first column keeps one sign: no root in the right half-plane.'
      : `The first column changes sign ${signChanges} time${signChanges === 1 ? '' : 's'}: ${signChanges} root${signChanges === 1 ? '' : 's'} in the right half-plane.`,
  )
  return {
    rows,
    first_column: firstColumn,
    sign_changes: signChanges,
    special_case: auxiliaryRows.length > 0 ? 'zero_row' : epsilonRows.length > 0 ? 'zero_first_element' : 'none',
    epsilon_rows: epsilonRows,
    auxiliary_rows: auxiliaryRows,
    notes,
  }
}

function isZeroRow(row: readonly number[]): boolean {
  return row.every((x) => x === 0)
}

function monomial(c: number, power: number): string {
  return power === 0 ? formatNumber(c) : `${formatNumber(c)}·s${power === 1 ? '' : `^${power}`}`
}

function formatNumber(x: number): string {
  return Number.isInteger(x) ? String(x) : x.toPrecision(6).replace(/\.?0+($|e)/, '$1')
}

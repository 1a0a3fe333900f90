// THE number formatter of every calculation screen (style.md, "One way through"): significant
// figures, the true minus sign, powers of ten past the readable range, the unit after the number (its powers
// set as superscripts: formatUnit), and "none" where the result holds null, with the reason the engine gave in
// its warnings.
// Formulas are typeset by the engine (shared/calc/tex.ts) and drawn by app/components/calc/Tex.vue, never here.

export interface NumberFormat {
  /** Significant figures (default 4). */
  digits?: number
  /** Unit written after the number: "s", "rad/s", "dB", "°", "%". */
  unit?: string
  /** Words for a missing value (default "none"). */
  none?: string
}

const MINUS = '\u2212'
const SUPERSCRIPT: Record<string, string> = { '-': '⁻', '0': '⁰', '1': '¹', '2': '²', '3': '³', '4': '⁴', '5': '⁵', '6': '⁶', '7': '⁷', '8': '⁸', '9': '⁹' }
// Below 1e-4 or from 1e6 up a plain decimal is hard to read in a table: write a power of ten.
const PLAIN_BELOW = 1e6
const PLAIN_FROM = 1e-4

interface Parts {
  negative: boolean
  mantissa: string
  exponent: number | null
}

function stripZeros(decimal: string) {
  return decimal.includes('.') ? decimal.replace(/0+$/, '').replace(/\.$/, '') : decimal
}

function numberParts(value: number, digits: number): Parts {
  const negative = value < 0
  const magnitude = Math.abs(value)
  if (magnitude === 0) return { negative: false, mantissa: '0', exponent: null }
  const rounded = Number(magnitude.toPrecision(digits))
  if (rounded >= PLAIN_FROM && rounded < PLAIN_BELOW) {
    return { negative, mantissa: stripZeros(rounded.toFixed(Math.max(0, digits - 1 - Math.floor(Math.log10(rounded))))), exponent: null }
  }
  const [mantissa, exponent] = magnitude.toExponential(digits - 1).split('e')
  return { negative, mantissa: stripZeros(mantissa!), exponent: Number(exponent) }
}

function unitAfter(text: string, unit: string | undefined) {
  if (!unit) return text
  return unit === '°' || unit === '%' ? `${text}${unit}` : `${text}\u00a0${formatUnit(unit)}`
}

/**
 * A unit as typed by an engineer ("m2", "(m3/s)/%", "m^3/h", "s^-1"), as printed: a power written after a unit's
 * letter, with or without ^, is set as a superscript (m², (m³/s)/%, m³/h, s⁻¹), the way SI units are written
 * (BIPM SI Brochure, 9th ed., §5.4.6, from memory). Digits anywhere else are left as they are ("4-20 mA", "1/s").
 * The one formatter of units on every screen and in print.
 */
export function formatUnit(unit: string): string {
  return unit.replace(/(?<=[\p{L}°)])(?:\^(-?\d+)|\^\((-?\d+)\)|(\d+)(?![\p{L}\d.,]))/gu, (_, caret: string | undefined, bracketed: string | undefined, plain: string | undefined) =>
    [...(caret ?? bracketed ?? plain)!].map((c) => SUPERSCRIPT[c]).join(''),
  )
}

/** A number for a screen or the print page. */
export function formatNumber(value: number | null | undefined, options: NumberFormat = {}): string {
  if (value === null || value === undefined || Number.isNaN(value)) return options.none ?? 'none'
  if (!Number.isFinite(value)) return unitAfter(value > 0 ? '∞' : `${MINUS}∞`, options.unit)
  const { negative, mantissa, exponent } = numberParts(value, options.digits ?? 4)
  const power = exponent === null ? '' : `\u00a0×\u00a010${[...String(exponent)].map((c) => SUPERSCRIPT[c]).join('')}`
  return unitAfter(`${negative ? MINUS : ''}${mantissa}${power}`, options.unit)
}

/** The engine's sentence that says why a quantity is missing, found by what it is about. */
export function reasonFor(warnings: readonly string[], about: RegExp): string | null {
  return warnings.find((sentence) => about.test(sentence)) ?? null
}

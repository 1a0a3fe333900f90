// A formula written out for paper (app/components/calc/FittedFormula.vue): where fitting a display formula to its
// column would shrink it below a readable size, its long fractions are named and set beneath it, each numerator
// and denominator on lines of its own: "T(s) = N(s)/D(s) with N(s) = …, D(s) = …", as a long transfer function is
// written out in print (common practice). Nothing breaks inside a fraction (texBreak.ts), so this is the way to
// set one whose numerator or denominator is longer than a line.
import { bracketedWhole, topLevelPieces, visibleLength } from './texBreak'

/**
 * Below this scale a fitted formula's type is smaller than a table's footnote (0.8 × body text): it is written out
 * instead, where it can be. The one floor of every fitted formula (the Stability section's T(s), the derivation).
 */
export const READABLE_SCALE = 0.8

// A fraction shorter than this (in visible characters, numerator or denominator) fits any column: never named.
const LONG_FRACTION = 16

interface Fraction {
  /** Index of the top-level piece (texBreak's topLevelPieces) that is this fraction, whole. */
  piece: number
  num: string
  den: string
}

/** Where the brace group opening at `from` closes (the index of its `}`), or -1. */
function closingBrace(tex: string, from: number): number {
  let depth = 0
  for (let i = from; i < tex.length; i++) {
    const c = tex[i]!
    if (c === '\\') i++
    else if (c === '{') depth++
    else if (c === '}' && --depth === 0) return i
  }
  return -1
}

/** `\frac{A}{B}` when that is the whole of `text`, else null. */
function wholeFraction(text: string): { num: string; den: string } | null {
  if (!text.startsWith('\\frac{')) return null
  const numEnd = closingBrace(text, '\\frac'.length)
  if (numEnd < 0 || text[numEnd + 1] !== '{') return null
  const denEnd = closingBrace(text, numEnd + 1)
  if (denEnd !== text.length - 1) return null
  return { num: text.slice('\\frac{'.length, numEnd), den: text.slice(numEnd + 2, denEnd) }
}

/** The formula's fractions that may be written out, the longest first: whole top-level pieces of some length. */
export function longFractions(tex: string): Fraction[] {
  // Only a chain of relations is written out; a sum or a list of formulas keeps its fractions in place.
  const pieces = topLevelPieces(tex)
  if (pieces.some((piece) => piece.joint !== '' && !/^ (=|\\approx) $/.test(piece.joint))) return []
  return pieces
    .flatMap((piece, index) => {
      const fraction = wholeFraction(piece.text)
      return fraction && Math.max(visibleLength(fraction.num), visibleLength(fraction.den)) >= LONG_FRACTION ? [{ piece: index, ...fraction }] : []
    })
    .sort((a, b) => visibleLength(b.num) + visibleLength(b.den) - (visibleLength(a.num) + visibleLength(a.den)))
}

export interface WrittenOut {
  /** The formula with each written-out fraction replaced by its names. */
  tex: string
  /** One formula per line beneath it: `N(s) = …`, `D(s) = …`. */
  parts: string[]
}

/**
 * The formula with its `count` longest fractions written out (`longFractions`), or null when it has none. One
 * fraction is named N(s)/D(s) (the Stability section's T(s) = N(s)/D(s)); several are numbered in the order they
 * stand, N_1(s)/D_1(s), N_2(s)/D_2(s). A numerator or denominator wholly in brackets loses them: N(s) is the sum.
 */
export function writeOut(tex: string, count: number): WrittenOut | null {
  const chosen = longFractions(tex).slice(0, count).sort((a, b) => a.piece - b.piece)
  if (!chosen.length) return null
  const pieces = topLevelPieces(tex)
  const parts: string[] = []
  chosen.forEach((fraction, order) => {
    const index = chosen.length === 1 ? '' : `_{${order + 1}}`
    const [num, den] = [`N${index}(s)`, `D${index}(s)`]
    pieces[fraction.piece] = { ...pieces[fraction.piece]!, text: `\\frac{${num}}{${den}}` }
    parts.push(`${num} = ${bracketedWhole(fraction.num) ?? fraction.num}`, `${den} = ${bracketedWhole(fraction.den) ?? fraction.den}`)
  })
  return { tex: pieces.map((piece) => `${piece.joint}${piece.text}`).join(''), parts }
}

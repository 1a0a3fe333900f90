// Line breaking of the engine's TeX for paper (Tex.vue, `fit`). KaTeX never breaks a display formula, and
// nothing breaks inside a fraction; so a formula too wide for its column is set as an `aligned` block with
// breaks only where the sum or the chain of equations is at its top level: before a top-level = or ≈ and
// before a top-level + or − sign, a continued line indented by a quad, as typeset derivations are set in
// print (common practice). The engine's TeX is kept character for character between the breaks, except that a
// bracketed sum too long for one line is opened (its \left( … \right) set as fixed-size brackets, which may stand
// on different lines) so that it breaks at its own signs.

const RELATIONS = [' = ', ' \\approx ']
const SIGNS = [' + ', ' - ']
const LISTS = [', \\qquad ', ', \\quad ']

/** The control word after a backslash at `at` (`left`, `frac`), or undefined for an escaped character (\{ \, \;). */
function controlWordAt(tex: string, at: number): string | undefined {
  return /^[a-zA-Z]+/.exec(tex.slice(at + 1))?.[0]
}

interface Piece {
  /** What joins this piece to the one before ('' for the first). */
  joint: string
  text: string
}

/** The formula cut at its top-level joints: outside every brace group and every \left … \right pair. */
export function topLevelPieces(tex: string): Piece[] {
  const pieces: Piece[] = []
  let depth = 0
  let start = 0
  let joint = ''
  for (let i = 0; i < tex.length; i++) {
    const c = tex[i]!
    if (c === '\\') {
      const word = controlWordAt(tex, i)
      if (word === 'left') depth++
      else if (word === 'right') depth--
      // A control word is stepped over whole; an escaped character (\{ \, \;) with the backslash.
      i += word ? word.length : 1
      continue
    }
    if (c === '{') depth++
    else if (c === '}') depth--
    else if (depth === 0 && i > start) {
      const found = [...RELATIONS, ...SIGNS, ...LISTS].find((candidate) => tex.startsWith(candidate, i))
      if (found) {
        pieces.push({ joint, text: tex.slice(start, i) })
        joint = found
        start = i + found.length
        i = start - 1
      }
    }
  }
  pieces.push({ joint, text: tex.slice(start) })
  return pieces
}

/** Roughly how wide a stretch of TeX sets, in characters: control words and grouping count as one or nothing. */
export function visibleLength(tex: string) {
  return tex.replace(/\\(left|right)\b/g, '').replace(/\\[a-zA-Z]+/g, 'x').replace(/[{}^_&\s]/g, '').length
}

/** Where a brace group or a \left … \right pair that opens at `from` closes (the index just past it), or -1. */
function groupEnd(tex: string, from: number): number {
  let depth = 0
  for (let i = from; i < tex.length; i++) {
    const c = tex[i]!
    if (c === '\\') {
      const word = controlWordAt(tex, i)
      if (word === 'left') depth++
      else if (word === 'right') depth--
      i += word ? word.length : 1
      // \right and its delimiter (one character, or an escaped one such as \}): the pair closes past it.
      if (word === 'right' && depth === 0) return i + (tex[i + 1] === '\\' ? 3 : 2)
      continue
    }
    if (c === '{') depth++
    else if (c === '}' && --depth === 0) return i + 1
  }
  return -1
}

/** The sum inside `\left( … \right)` when that pair is the whole of `tex`, else null. */
export function bracketedWhole(tex: string): string | null {
  const trimmed = tex.trim()
  if (!trimmed.startsWith('\\left(') || !trimmed.endsWith('\\right)')) return null
  return groupEnd(trimmed, 0) === trimmed.length ? trimmed.slice('\\left('.length, -'\\right)'.length) : null
}

/** The top-level `\left( … \right)` pairs of one piece whose insides hold a sum: where each starts and ends. */
function openableGroups(text: string): Array<{ start: number; end: number; inner: string }> {
  const groups: Array<{ start: number; end: number; inner: string }> = []
  for (let i = 0; i < text.length; i++) {
    const c = text[i]!
    if (c === '{' || /^\\left(?![a-zA-Z])/.test(text.slice(i, i + 6))) {
      const end = groupEnd(text, i)
      if (end < 0) return groups
      if (text.startsWith('\\left(', i) && text.startsWith('\\right)', end - '\\right)'.length)) {
        const inner = text.slice(i + '\\left('.length, end - '\\right)'.length)
        if (topLevelPieces(inner).length > 1) groups.push({ start: i, end, inner })
      }
      i = end - 1
    } else if (c === '\\') i += controlWordAt(text, i)?.length ?? 1
  }
  return groups
}

/**
 * The formula with its bracketed sums opened, longest first, while a top-level piece is still longer than
 * `budget`: `\left(` and `\right)` become brackets of a fixed size (\biggl, tall enough for the engine's
 * fractional coefficients, where the sum holds a fraction; plain ones otherwise), so its signs are top-level
 * joints too.
 */
export function openLongGroups(tex: string, budget: number): string {
  let current = tex
  for (let round = 0; round < 8; round++) {
    const pieces = topLevelPieces(current)
    const candidates = pieces
      .map((piece, index) => ({ piece, index, groups: visibleLength(piece.text) > budget ? openableGroups(piece.text) : [] }))
      .filter((candidate) => candidate.groups.length > 0)
    if (!candidates.length) return current
    const { piece, index, groups } = candidates.reduce((a, b) => (visibleLength(b.piece.text) > visibleLength(a.piece.text) ? b : a))
    const group = groups.reduce((a, b) => (visibleLength(b.inner) > visibleLength(a.inner) ? b : a))
    const [open, close] = group.inner.includes('\\frac') ? ['\\biggl(', '\\biggr)'] : ['(', ')']
    const opened = `${piece.text.slice(0, group.start)}${open}${group.inner}${close}${piece.text.slice(group.end)}`
    current = pieces.map((p, at) => `${p.joint}${at === index ? opened : p.text}`).join('')
  }
  return current
}

/** Whether `breakTex` has anywhere to break this formula. */
export function canBreak(tex: string) {
  return !/\\begin|\\\\/.test(tex) && topLevelPieces(tex).length > 1
}

/**
 * The formula as lines of at most about `budget` visible characters, broken at top-level joints only. A
 * relation starts a new line aligned on it; a sign carries on the line until it is full.
 */
export function breakTex(tex: string, budget: number): string {
  if (!canBreak(tex)) return tex
  const pieces = topLevelPieces(openLongGroups(tex, budget))
  const rows: string[] = []
  let row = ''
  let rowLength = 0
  let aligned = false
  for (const piece of pieces) {
    const length = visibleLength(piece.text)
    if (piece.joint === '') {
      row = piece.text
      rowLength = length
    } else if (RELATIONS.includes(piece.joint)) {
      const relation = piece.joint.trim()
      if (!aligned) {
        row = `${row} &${relation} ${piece.text}`
        aligned = true
      } else {
        rows.push(row)
        row = `&${relation} ${piece.text}`
        rowLength = 0
      }
      rowLength += length + 1
    } else if (LISTS.includes(piece.joint)) {
      rows.push(`${row},`)
      row = `& ${piece.text}`
      rowLength = length
    } else if (rowLength + length + 1 > budget && rowLength > 0) {
      rows.push(row)
      row = `&\\quad ${piece.joint.trim()} ${piece.text}`
      rowLength = length + 2
    } else {
      row = `${row}${piece.joint}${piece.text}`
      rowLength += length + 1
    }
  }
  rows.push(row)
  if (rows.length === 1) return tex
  // Rows before the first relation have no & of their own; give them one so every row aligns.
  return `\\begin{aligned}${rows.map((text) => (text.includes('&') ? text : `& ${text}`)).join(' \\\\ ')}\\end{aligned}`
}

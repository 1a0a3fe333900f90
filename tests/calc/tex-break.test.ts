// The print view's line breaking of the engine's TeX (app/utils/texBreak.ts): breaks only at top-level
// joints, the engine's TeX kept between them, and KaTeX accepts what comes out.
import katex from 'katex'
import { describe, expect, it } from 'vitest'
import { evaluateLoop } from '../../shared/calc'
import { loopFileOf, sheetDocumentSchema } from '../../shared/schemas/sheet'
import { breakTex, canBreak, topLevelPieces } from '../../app/utils/texBreak'
import cascade from '../../sheets/cascade-loop.json'

/** A formula with breakTex's layout (aligned, row breaks, alignment marks, quads) and all spaces taken out. */
function bare(tex: string) {
  return tex.replace(/\\(begin|end)\{aligned\}|\\\\|&|\\q?quad|\s+/g, '')
}

describe('breaking long formulas at their top level', () => {
  it('never cuts inside a fraction or a \\left … \\right pair', () => {
    const tex = 'T(s) = \\frac{a + b}{c + d} = \\left(x + y\\right) s^{2} + z s - 1'
    const pieces = topLevelPieces(tex)
    expect(pieces.map((piece) => piece.text)).toEqual(['T(s)', '\\frac{a + b}{c + d}', '\\left(x + y\\right) s^{2}', 'z s', '1'])
    expect(pieces.map((piece) => piece.joint)).toEqual(['', ' = ', ' = ', ' + ', ' - '])
    expect(canBreak('\\frac{a + b}{c}')).toBe(false)
  })

  it('sets every formula of the cascade template as lines KaTeX accepts, with the same TeX between the breaks', () => {
    const result = evaluateLoop(loopFileOf(sheetDocumentSchema.parse(cascade.document)))
    const formulas = [`D(s) = ${result.closed_loop.den_tex}`, `N(s) = ${result.closed_loop.num_tex}`, ...result.steps.map((step) => step.tex)]
    let broken = 0
    for (const tex of formulas) {
      const lines = breakTex(tex, 40)
      if (lines !== tex) broken++
      expect(bare(lines)).toBe(bare(tex))
      expect(() => katex.renderToString(lines, { displayMode: true, throwOnError: true, strict: 'ignore' })).not.toThrow()
    }
    // D(s) of the cascade has five terms in s: at 40 characters a line it cannot stay on one.
    expect(breakTex(formulas[0]!, 40).split(' \\\\ ').length).toBeGreaterThan(2)
    expect(broken).toBeGreaterThan(3)
  })

  it('leaves a formula that fits its budget as it was', () => {
    expect(breakTex('G(s) = \\frac{1}{s + 1}', 80)).toBe('G(s) = \\frac{1}{s + 1}')
  })
})

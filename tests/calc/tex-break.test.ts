// The print view's line breaking of the engine's TeX (app/utils/texBreak.ts): breaks only at top-level
// joints, the engine's TeX kept between them (a long bracketed sum opened to break at its own signs), and KaTeX
// accepts what comes out; and the writing out of a formula too long to fit (app/utils/texWriteOut.ts).
import katex from 'katex'
import { describe, expect, it } from 'vitest'
import { evaluateLoop } from '../../shared/calc'
import { loopFileOf, sheetDocumentSchema } from '../../shared/schemas/sheet'
import { breakTex, canBreak, openLongGroups, topLevelPieces } from '../../app/utils/texBreak'
import { longFractions, writeOut } from '../../app/utils/texWriteOut'
import cascade from '../../sheets/cascade-loop.json'
import deadTime from '../../sheets/dead-time-flow-loop.json'

/** A formula with breakTex's layout (aligned, row breaks, alignment marks, quads, opened brackets) and all spaces taken out. */
function bare(tex: string) {
  return tex.replace(/\\(begin|end)\{aligned\}|\\\\|&|\\q?quad|\s+/g, '').replace(/\\(left|biggl)\(/g, '(').replace(/\\(right|biggr)\)/g, ')')
}
const renders = (tex: string) => katex.renderToString(tex, { displayMode: true, throwOnError: true, strict: 'ignore' })

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

describe('opening a bracketed sum too long for a line', () => {
  const tex = 'D(s) = \\left(a s^{2} + b s + c\\right) + \\left(\\frac{1}{12} d s^{2} + e s + f\\right) K_t'
  it('sets its brackets at a fixed size, tall ones around fractions, so that it breaks at its own signs', () => {
    expect(openLongGroups(tex, 100)).toBe(tex)
    const opened = openLongGroups(tex, 8)
    expect(opened).toBe('D(s) = (a s^{2} + b s + c) + \\biggl(\\frac{1}{12} d s^{2} + e s + f\\biggr) K_t')
    const lines = breakTex(tex, 8)
    expect(lines.split(' \\\\ ').length).toBeGreaterThan(4)
    expect(bare(lines)).toBe(bare(tex))
    expect(() => renders(lines)).not.toThrow()
  })
  it('leaves a bracket alone whose inside is no sum, and a fraction\'s insides', () => {
    const product = 'G(s) = \\left(a b c d e f g h\\right) + \\frac{x + y + z + w + v}{u}'
    expect(openLongGroups(product, 4)).toBe(product)
  })
})

describe('writing out a formula too long to fit', () => {
  it('names its long fraction N(s)/D(s) and sets numerator and denominator beneath, brackets around a whole one dropped', () => {
    const tex = 'T(s) = \\frac{N_G}{D_G + N_G} = \\frac{\\left(a s^{3} + b s^{2} + c s + d\\right)}{\\left(e s^{4} + f s^{3} + g s^{2}\\right) + \\left(a s^{3} + b s^{2} + c s + d\\right)}'
    expect(longFractions(tex).map((fraction) => fraction.piece)).toEqual([2])
    expect(writeOut(tex, 1)).toEqual({
      tex: 'T(s) = \\frac{N_G}{D_G + N_G} = \\frac{N(s)}{D(s)}',
      parts: ['N(s) = a s^{3} + b s^{2} + c s + d', 'D(s) = \\left(e s^{4} + f s^{3} + g s^{2}\\right) + \\left(a s^{3} + b s^{2} + c s + d\\right)'],
    })
  })
  it('numbers two fractions in the order they stand, and writes out no sum or list of formulas', () => {
    const long = 'a s^{4} + b s^{3} + c s^{2} + d s + e'
    const tex = `G(s) = \\frac{${long}}{${long} + f} = \\frac{${long}}{s}`
    expect(writeOut(tex, 2)!.tex).toBe('G(s) = \\frac{N_{1}(s)}{D_{1}(s)} = \\frac{N_{2}(s)}{D_{2}(s)}')
    expect(writeOut(tex, 1)!.tex).toBe(`G(s) = \\frac{N(s)}{D(s)} = \\frac{${long}}{s}`)
    expect(writeOut(`e^{-s} \\approx \\frac{${long}}{${long}}, \\qquad G(s) = 1`, 1)).toBeNull()
    expect(writeOut('G(s) = \\frac{1}{s + 1}', 1)).toBeNull()
  })
  it('writes out every derivation step of the dead-time template as formulas KaTeX sets, broken or not', () => {
    const result = evaluateLoop(loopFileOf(sheetDocumentSchema.parse(deadTime.document)))
    let written = 0
    for (const step of result.steps) {
      const out = writeOut(step.tex, 2)
      if (!out) continue
      written++
      for (const formula of [out.tex, ...out.parts]) {
        expect(() => renders(formula)).not.toThrow()
        const lines = breakTex(formula, 30)
        expect(bare(lines)).toBe(bare(formula))
        expect(() => renders(lines)).not.toThrow()
      }
    }
    // The series product, the numerator and denominator form, the expansion, the numbers, the normalised loop.
    expect(written).toBeGreaterThan(3)
  })
})

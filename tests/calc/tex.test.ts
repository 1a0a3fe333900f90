import katex from 'katex'
import { describe, expect, it } from 'vitest'
import { reduceStructure } from '../../shared/calc/reduce'
import { defaultSymbolTex, numberTex, numericPolynomialTex, polynomialTex, rationalMagnitudeTex, texProblem } from '../../shared/calc/tex'
import { Rational } from '../../shared/calc/rational'
import type { LoopFileInput } from '../../shared/schemas/loop'
import { modelOf } from './support/algebra'

/** Everything the engine typesets must render in KaTeX, the typesetter of the sheet and the PDF. */
function renders(tex: string): void {
  expect(() => katex.renderToString(tex, { throwOnError: true }), tex).not.toThrow()
}

const awkward: LoopFileInput = {
  parameters: {
    K_c: { value: 2 },
    tau_d1: { value: 0.25 },
    Kg: { value: 1.5, tex: '\\mathcal{K}' },
    w: { value: 3, tex: "\\omega'_n" },
    a1: { value: -0.1 },
    L: { value: 0.4, tex: '\\theta' },
  },
  blocks: {
    C_1: { role: 'controller', num: 'K_c*(s/3 + 1)', den: 's' },
    'A-2': { role: 'actuator', num: '-Kg*w^2', den: '(tau_d1*s + 1)^2*(s^2 + 2*a1*w*s + w^2)', delay: 'L/2' },
    H: { role: 'sensor', num: '1', den: '0.05*s + 1' },
    F: { role: 'compensator', num: '1/3 - a1*s', den: '1' },
  },
  structure: {
    feedback: {
      forward: { series: ['C_1', { parallel: ['F', { feedback: { forward: 'A-2', return: 'H', sign: 1 } }], signs: [-1, 1] }] },
      return: 'H',
    },
  },
}

describe('TeX renders in KaTeX', () => {
  it('renders every step of a loop with awkward names, signs, fractions, a dead time and nested nodes', () => {
    const { loop, parameters, blocks } = modelOf(awkward)
    const r = reduceStructure(loop.structure, blocks, parameters)
    expect(r.steps.length).toBeGreaterThan(15)
    for (const step of r.steps) renders(step.tex)
    renders(polynomialTex(r.closedLoop.num, parameters.tex))
    renders(polynomialTex(r.closedLoop.den, parameters.tex))
  })

  it('renders default symbols', () => {
    for (const s of ['K', 'Kc', 'K_c', 'tau_d1', 'T_1_a', 'x1']) renders(defaultSymbolTex(s))
  })

  it('reports TeX that KaTeX cannot typeset', () => {
    expect(texProblem('K_{c')).toMatch(/KaTeX/)
    expect(texProblem('\\omega_n')).toBeNull()
  })
})

describe('TeX forms', () => {
  it('typesets symbols by default with subscripts', () => {
    expect(defaultSymbolTex('K')).toBe('K')
    expect(defaultSymbolTex('K_c')).toBe('K_{c}')
    expect(defaultSymbolTex('Kc')).toBe('\\mathit{Kc}')
    expect(defaultSymbolTex('tau_d1')).toBe('\\mathit{tau}_{\\mathrm{d1}}')
  })

  it('writes short exact decimals as decimals and other rationals as fractions', () => {
    expect(rationalMagnitudeTex(new Rational(1, 10))).toBe('0.1')
    expect(rationalMagnitudeTex(new Rational(5, 4))).toBe('1.25')
    expect(rationalMagnitudeTex(new Rational(1, 3))).toBe('\\frac{1}{3}')
    expect(rationalMagnitudeTex(new Rational(7))).toBe('7')
  })

  it('writes numbers to six significant digits with powers of ten', () => {
    expect(numberTex(3.8000000000000003)).toBe('3.8')
    expect(numberTex(1 / 3)).toBe('0.333333')
    expect(numberTex(2.5e-7)).toBe('2.5 \\times 10^{-7}')
    expect(numericPolynomialTex([1, -3.8, 0, 1, -2])).toBe('s^{4} - 3.8 s^{3} + s - 2')
  })

  it('collects a symbolic polynomial in powers of s with parenthesised sums', () => {
    const { parameters, blocks } = modelOf({
      parameters: { Ti: { value: 1, tex: 'T_i' }, td: { value: 1, tex: '\\tau_d' } },
      blocks: { X: { role: 'other', num: '1', den: '(Ti*s)*(td*s + 1) + Ti*s/2 - 1' } },
      structure: 'X',
    })
    expect(polynomialTex(blocks.get('X')!.rational.den, parameters.tex)).toBe('T_i \\tau_d s^{2} + 1.5 T_i s - 1')
  })
})

describe('TeX of a whole result renders in KaTeX', () => {
  it('renders every step and the closed and open loop of the booster example', async () => {
    const { readFileSync } = await import('node:fs')
    const { evaluateLoopText } = await import('../../shared/calc/index')
    const result = evaluateLoopText(readFileSync(`${__dirname}/../../../shared/examples/booster-pressure.json`, 'utf8'))
    expect(result.steps.map((s) => s.kind)).toEqual([
      'block', 'block', 'block', 'block', 'series', 'feedback', 'feedback', 'expansion', 'substitution', 'check', 'numeric', 'check',
    ])
    for (const step of result.steps) renders(step.tex)
    for (const tex of [result.closed_loop.num_tex, result.closed_loop.den_tex, result.open_loop!.num_tex, result.open_loop!.den_tex]) renders(tex)
  })
})

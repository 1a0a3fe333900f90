import { describe, expect, it } from 'vitest'
import { numericBlocks, structureAt } from '../../shared/calc/evaluate'
import { checkDegrees, reduceStructure } from '../../shared/calc/reduce'
import { compilePolynomial } from '../../shared/calc/polynomial'
import type { LoopFileInput } from '../../shared/schemas/loop'
import { modelOf, polynomialText, python } from './support/algebra'

/** Loops with every coefficient symbolic, of each structure the contract allows. */
const loops: Record<string, LoopFileInput> = {
  booster: JSON.parse(
    '{"parameters":{"Kc":{"value":1},"Ti":{"value":3},"Kd":{"value":1},"td":{"value":0.5},"Kg":{"value":1.2},"wn":{"value":1.5},"zeta":{"value":0.6},"Kt":{"value":0.8}},' +
      '"blocks":{"C":{"role":"controller","num":"Kc*(Ti*s + 1)","den":"Ti*s"},"A":{"role":"actuator","num":"Kd","den":"td*s + 1"},' +
      '"P":{"role":"plant","num":"Kg*wn^2","den":"s^2 + 2*zeta*wn*s + wn^2"},"S":{"role":"sensor","num":"Kt"}},' +
      '"structure":{"feedback":{"forward":{"series":["C","A","P"]},"return":"S","sign":-1}}}',
  ),
  cascade: {
    parameters: { K1: { value: 2 }, K2: { value: 0.5 }, T1: { value: 4 }, T2: { value: 0.7 }, a: { value: 1.5 } },
    blocks: {
      C1: { role: 'controller', num: 'K1*(T1*s + 1)', den: 'T1*s' },
      C2: { role: 'controller', num: 'K2' },
      V: { role: 'actuator', num: '1', den: 'T2*s + 1' },
      P: { role: 'plant', num: 'a', den: 's*(s + a)' },
      H: { role: 'sensor', num: '1', den: '0.1*s + 1' },
    },
    structure: { feedback: { forward: { series: ['C1', { feedback: { forward: { series: ['C2', 'V'] }, return: 'H' } }, 'P'] }, return: null } },
  },
  parallelSigns: {
    parameters: { Kp: { value: 1.2 }, Kd: { value: 0.3 }, T: { value: 2 } },
    blocks: {
      Pp: { role: 'controller', num: 'Kp' },
      Dd: { role: 'controller', num: 'Kd*s', den: '0.05*s + 1' },
      G: { role: 'plant', num: '1', den: '(T*s + 1)^2' },
    },
    structure: { feedback: { forward: { series: [{ parallel: ['Pp', 'Dd'], signs: [1, -1] }, 'G'] }, sign: -1 } },
  },
  positive: {
    parameters: { K: { value: 0.4 }, T: { value: 3 }, b: { value: 2 } },
    blocks: { G: { role: 'plant', num: 'K/b', den: 'T*s + 1' }, H: { role: 'other', num: 'b', den: 's + b' } },
    structure: { feedback: { forward: 'G', return: 'H', sign: 1 } },
  },
  deadTime: {
    parameters: { K: { value: 1 }, T: { value: 5 }, L: { value: 0.8 } },
    blocks: { G: { role: 'plant', num: 'K', den: 'T*s + 1', delay: 'L' } },
    structure: { feedback: { forward: 'G' } },
    delay_approximation: { method: 'pade', order: 3 },
  },
}

/**
 * Reference: Debian's python3-sympy builds the same loop from the block
 * expressions by T = G/(1 − σGH) and checks (1) our exact polynomials equal
 * N_G·D_H and D_G·D_H − σ·N_G·N_H expanded (up to one numeric factor: sympy
 * scales 0.1·s + 1 to s + 10), so no factor was cancelled, and (2) N/D equals G/(1 − σGH) as
 * a rational function (sympy's cancel).
 */
const SYMPY = String.raw`
import json, sys, sympy as sp
cases = json.load(sys.stdin)
s = sp.Symbol('s')
out = []
def read(text, ns):
    return sp.together(sp.sympify(text.replace('^', '**'), locals=ns, rational=True))
def pade(theta, n):
    c = [sp.factorial(2*n-k)*sp.factorial(n)/(sp.factorial(2*n)*sp.factorial(k)*sp.factorial(n-k)) for k in range(n+1)]
    return (sum(c[k]*(-theta*s)**k for k in range(n+1)), sum(c[k]*(theta*s)**k for k in range(n+1)))
for case in cases:
    ns = {p: sp.Symbol(p) for p in case['parameters']}
    ns['s'] = s
    order = case['order']
    def block(b):
        n, dn = sp.fraction(read(b['num'], ns))
        d, dd = sp.fraction(read(b.get('den', '1'), ns))
        num, den = n*dd, d*dn
        if 'delay' in b:
            pn, pd = pade(sp.sympify(b['delay'], locals=ns, rational=True), order)
            num, den = num*pn, den*pd
        return (sp.expand(num), sp.expand(den))
    def node(x):
        if isinstance(x, str): return block(case['blocks'][x])
        if 'series' in x:
            parts = [node(c) for c in x['series']]
            return (sp.expand(sp.Mul(*[p[0] for p in parts])), sp.expand(sp.Mul(*[p[1] for p in parts])))
        if 'parallel' in x:
            parts = [node(c) for c in x['parallel']]
            signs = x.get('signs', [1]*len(parts))
            den = sp.Mul(*[p[1] for p in parts])
            num = sum(sg*p[0]*sp.Mul(*[q[1] for j, q in enumerate(parts) if j != i]) for i, (p, sg) in enumerate(zip(parts, signs)))
            return (sp.expand(num), sp.expand(den))
        f = x['feedback']
        sigma = f.get('sign', -1)
        g = node(f['forward'])
        h = node(f['return']) if f.get('return') else (sp.Integer(1), sp.Integer(1))
        return (sp.expand(g[0]*h[1]), sp.expand(g[1]*h[1] - sigma*g[0]*h[0]))
    def naive(x):
        if isinstance(x, str):
            n, d = block(case['blocks'][x]); return n/d
        if 'series' in x: return sp.Mul(*[naive(c) for c in x['series']])
        if 'parallel' in x:
            signs = x.get('signs', [1]*len(x['parallel']))
            return sum(sg*naive(c) for c, sg in zip(x['parallel'], signs))
        f = x['feedback']; g = naive(f['forward'])
        h = naive(f['return']) if f.get('return') else 1
        return g/(1 - f.get('sign', -1)*g*h)
    num, den = node(case['structure'])
    mine_num = sp.sympify(case['num'], locals=ns); mine_den = sp.sympify(case['den'], locals=ns)
    # sympy moves numeric divisors (0.1*s + 1 = (s + 10)/10) into the denominator, so the forms agree up to one constant.
    ratio = sp.cancel(mine_den/den)
    out.append({
        'num_equal': ratio.is_number and ratio != 0 and sp.expand(mine_num - ratio*num) == 0,
        'den_equal': ratio.is_number and ratio != 0 and sp.expand(mine_den - ratio*den) == 0,
        'same_function': sp.cancel(mine_num/mine_den - naive(case['structure'])) == 0,
    })
print(json.dumps(out))
`

describe('reduction against sympy (Debian python3-sympy)', () => {
  it('gives the contract\'s exact polynomials and the right transfer function for every structure', () => {
    const cases = Object.values(loops).map((input) => {
      const { loop, parameters, blocks } = modelOf(input)
      checkDegrees(loop.structure, blocks)
      const r = reduceStructure(loop.structure, blocks, parameters)
      return { ...loop, order: loop.delay_approximation.order, num: polynomialText(r.closedLoop.num, parameters.symbols), den: polynomialText(r.closedLoop.den, parameters.symbols) }
    })
    const verdicts = python<Array<Record<string, boolean>>>(SYMPY, cases)
    expect(verdicts).toEqual(cases.map(() => ({ num_equal: true, den_equal: true, same_function: true })))
  })
})

describe('reduction against the structure evaluated directly', () => {
  // Property: the reduced T(s) at random complex s equals the block diagram evaluated at s (no dead time here, so Padé plays no part).
  it.each(Object.keys(loops).filter((k) => k !== 'deadTime'))('%s', (name) => {
    const { loop, parameters, blocks } = modelOf(loops[name])
    const r = reduceStructure(loop.structure, blocks, parameters, { steps: false })
    const num = compilePolynomial(r.closedLoop.num)(parameters.values)
    const den = compilePolynomial(r.closedLoop.den)(parameters.values)
    const numeric = numericBlocks(blocks)(parameters.values)
    let seed = 7
    const random = () => ((seed = (seed * 16807) % 2147483647) / 2147483647) * 4 - 2
    for (let k = 0; k < 50; k++) {
      const s = { re: random(), im: random() }
      const at = (c: number[]) => c.reduceRight((acc, a) => ({ re: acc.re * s.re - acc.im * s.im + a, im: acc.re * s.im + acc.im * s.re }), { re: 0, im: 0 })
      const n = at(num)
      const d = at(den)
      const t = { re: (n.re * d.re + n.im * d.im) / (d.re ** 2 + d.im ** 2), im: (n.im * d.re - n.re * d.im) / (d.re ** 2 + d.im ** 2) }
      const direct = structureAt(loop.structure, numeric, s)
      const scale = Math.hypot(direct.re, direct.im)
      expect(Math.hypot(t.re - direct.re, t.im - direct.im)).toBeLessThan(1e-10 * Math.max(1, scale))
    }
  })
})

describe('steps of the derivation', () => {
  it('lists blocks, the series product, then each feedback node\'s five steps, inner loop first', () => {
    const { loop, parameters, blocks } = modelOf(loops.cascade)
    const r = reduceStructure(loop.structure, blocks, parameters)
    expect(r.steps.map((s) => s.kind)).toEqual([
      'block', 'block', 'block', 'block', 'block',
      'series',
      'feedback', 'feedback', 'expansion', 'substitution', 'check',
      'series',
      'feedback', 'feedback', 'expansion', 'substitution', 'check',
    ])
    expect(r.steps[5].tex).toContain('G_{1}(s) = G_{\\mathrm{C2}}(s)\\,G_{\\mathrm{V}}(s)')
    expect(r.steps[6].tex).toBe('T_{1}(s) = \\frac{G_{1}(s)}{1 + G_{1}(s)\\,G_{\\mathrm{H}}(s)}')
    expect(r.steps[13].tex).toMatch(/^T\(s\) = \\frac\{N_G\}\{D_G \+ N_G\}/)
    expect(r.steps[16].text).toBe('The closed loop has a numerator of order 2, denominator of order 5.')
  })

  it('shows the Padé approximant of a dead time and keeps its order', () => {
    const { loop, parameters, blocks } = modelOf(loops.deadTime)
    const r = reduceStructure(loop.structure, blocks, parameters)
    const pade = r.steps.find((s) => s.title.startsWith('Padé'))!
    expect(pade.kind).toBe('substitution')
    // Order 3: e^(−x) ≈ (1 − x/2 + x²/10 − x³/120)/(1 + x/2 + x²/10 + x³/120) (Padé table of the exponential, from memory).
    expect(pade.tex).toContain('\\frac{-\\frac{1}{120} {L}^{3} s^{3} + 0.1 {L}^{2} s^{2} - 0.5 L s + 1}{\\frac{1}{120} {L}^{3} s^{3} + 0.1 {L}^{2} s^{2} + 0.5 L s + 1}')
    expect(r.closedLoop.den.length - 1).toBe(4)
  })

  it('writes the steps\' sentences in words, the TeX in their formulas only', () => {
    for (const loop of [loops.cascade, loops.positive, loops.deadTime]) {
      const { loop: file, parameters, blocks } = modelOf(loop)
      for (const step of reduceStructure(file.structure, blocks, parameters).steps) expect(step.text, step.title).not.toMatch(/[\\_{}^$]/)
    }
    const { loop, parameters, blocks } = modelOf(loops.cascade)
    const feedback = reduceStructure(loop.structure, blocks, parameters).steps.filter((step) => step.kind === 'feedback')
    // The cascade's inner loop: C2 and V in series (G1) closed through block H; the outer loop (G2) by unity.
    expect(feedback.map((step) => step.text)).toEqual([
      'The forward path G1 closed with negative feedback through block H on the return path.',
      'Each path written as numerator over denominator (N over D, with subscript G for the forward path and H for the return path), then multiplied through by both denominators: polynomials only.',
      'The forward path G2 closed with negative unity feedback.',
      'The forward path written as numerator over denominator (N over D, with subscript G), then multiplied through by its denominator: polynomials only.',
    ])
  })

  it('shows the positive-feedback sign in both feedback forms', () => {
    const { loop, parameters, blocks } = modelOf(loops.positive)
    const r = reduceStructure(loop.structure, blocks, parameters)
    const fb = r.steps.filter((s) => s.kind === 'feedback')
    expect(fb[0].tex).toBe('T(s) = \\frac{G_{\\mathrm{G}}(s)}{1 - G_{\\mathrm{G}}(s)\\,G_{\\mathrm{H}}(s)}')
    expect(fb[1].tex).toContain('\\frac{N_G D_H}{D_G D_H - N_G N_H}')
  })
})

// How fast it is measured by `npm run bench` (8 lags against sympy), never by a timed test.
describe('the exact expansion of a long series', () => {
  it('expands the 8-lag loop with symbolic time constants into every term', () => {
    const parameters: Record<string, { value: number }> = {}
    const blocksIn: Record<string, { role: 'plant'; num: string; den: string }> = {}
    for (let i = 1; i <= 8; i++) {
      parameters[`T${i}`] = { value: i }
      blocksIn[`L${i}`] = { role: 'plant', num: '1', den: `T${i}*s + 1` }
    }
    const { loop, parameters: p, blocks } = modelOf({ parameters, blocks: blocksIn, structure: { feedback: { forward: { series: Object.keys(blocksIn) } } } })
    const r = reduceStructure(loop.structure, blocks, p)
    // 1 + Π(T_i s + 1): 2^8 terms in all, one of them the constant 2.
    expect(r.closedLoop.den.reduce((n, c) => n + c.terms.size, 0)).toBe(256)
  })
})

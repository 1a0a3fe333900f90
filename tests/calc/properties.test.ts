/**
 * Properties the engine's results must have, over the seeded random loops:
 *
 * (a) T(s) from the engine's closed_loop num/den, evaluated at random complex
 *     s, equals the structure evaluated directly at s: each block's num and den
 *     evaluated by mathjs at a complex s (no polynomial algebra at all), then
 *     the structure rules applied to the complex values: series multiply,
 *     parallel sum with signs, feedback G/(1 − sign·G·H). A block's dead time
 *     enters as the [n/n] Padé approximant of the loop file's order, evaluated
 *     at s from its closed form P(−sθ)/P(sθ), P(x) = Σ (2n−k)! n!/((2n)! k! (n−k)!) x^k
 *     (the standard approximant of e^(−x), e.g. Franklin, Powell &
 *     Emami-Naeini, "Feedback Control of Dynamic Systems", time delay; from
 *     memory). Agreement to 1e-9 relative.
 * (b) The Routh array's sign changes equal the number of right-half-plane
 *     roots of the closed-loop denominator, counted from numpy.roots by the
 *     independent reference (tests/calc/reference/reference.py, Debian's
 *     python3-numpy and python3-sympy), over the random loops and over loops
 *     built to hit both special cases (a zero first element; a row of zeros
 *     with roots on the imaginary axis).
 */
import { type Complex as MathComplex, complex, evaluate } from 'mathjs'
import { beforeAll, describe, expect, it } from 'vitest'
import { type CalcResult, evaluateLoop } from '../../shared/calc/index'
import { type RandomLoopFile, type RandomNode, randomLoops, seededRandom } from './random-loops'
import { type RefResult, runReference } from './reference-run'

type Loop = RandomLoopFile & { delay_approximation?: { order: number } }

const ZERO = complex(0, 0)
const ONE = complex(1, 0)
const add = (a: MathComplex, b: MathComplex) => complex(a.re + b.re, a.im + b.im)
const mul = (a: MathComplex, b: MathComplex) => complex(a.re * b.re - a.im * b.im, a.re * b.im + a.im * b.re)
const div = (a: MathComplex, b: MathComplex) => {
  const d = b.re * b.re + b.im * b.im
  return complex((a.re * b.re + a.im * b.im) / d, (a.im * b.re - a.re * b.im) / d)
}
const scale = (a: MathComplex, k: number) => complex(a.re * k, a.im * k)
const asComplex = (v: unknown): MathComplex => (typeof v === 'number' ? complex(v, 0) : (v as MathComplex))

function factorial(k: number): number {
  return k <= 1 ? 1 : k * factorial(k - 1)
}

/** The [n/n] Padé approximant of e^(−sθ) at complex s. */
function padeAt(s: MathComplex, theta: number, n: number): MathComplex {
  let num = ZERO
  let den = ZERO
  let x = ONE // (sθ)^k
  const st = scale(s, theta)
  for (let k = 0; k <= n; k++) {
    const c = (factorial(2 * n - k) * factorial(n)) / (factorial(2 * n) * factorial(k) * factorial(n - k))
    den = add(den, scale(x, c))
    num = add(num, scale(x, k % 2 === 0 ? c : -c))
    x = mul(x, st)
  }
  return div(num, den)
}

/** The structure evaluated directly at s, by mathjs on each block's own expressions. */
function structureAt(loop: Loop, node: RandomNode, s: MathComplex): MathComplex {
  const scope: Record<string, unknown> = { s }
  for (const [name, p] of Object.entries(loop.parameters)) scope[name] = p.value
  if (typeof node === 'string') {
    const b = loop.blocks[node]!
    let v = div(asComplex(evaluate(b.num, { ...scope })), asComplex(evaluate(b.den ?? '1', { ...scope })))
    if (b.delay) v = mul(v, padeAt(s, Number(evaluate(b.delay, { ...scope })), loop.delay_approximation?.order ?? 2))
    return v
  }
  if ('series' in node) return node.series.reduce((acc, n) => mul(acc, structureAt(loop, n, s)), ONE)
  if ('parallel' in node) return node.parallel.reduce((acc, n, i) => add(acc, scale(structureAt(loop, n, s), node.signs?.[i] ?? 1)), ZERO)
  const g = structureAt(loop, node.feedback.forward, s)
  const h = node.feedback.return ? structureAt(loop, node.feedback.return, s) : ONE
  const sign = node.feedback.sign ?? -1
  return div(g, add(ONE, scale(mul(g, h), -sign)))
}

/** Horner's rule at complex s, coefficients from the highest power down. */
function polynomialAt(coefficients: number[], s: MathComplex): MathComplex {
  return coefficients.reduce((acc, c) => add(mul(acc, s), complex(c, 0)), ZERO)
}

/** Loops built so that the Routh array meets each special case. */
function specialCaseLoops(): Loop[] {
  const rnd = seededRandom(7)
  const quarter = (lo: number, hi: number) => Math.round((lo + (hi - lo) * rnd()) * 4) / 4 // exact in binary
  const out: Loop[] = []
  for (let i = 0; i < 12; i++) {
    // den = s^3 + a s^2 + b s + a b = (s + a)(s^2 + b): a row of zeros, roots ±j√b.
    const a = quarter(0.5, 4)
    const b = quarter(0.5, 4)
    out.push({
      title: `Routh row of zeros ${i}`,
      parameters: { a: { value: a }, b: { value: b }, K: { value: a * b } },
      blocks: { G: { role: 'plant', num: 'K', den: 's^3 + a*s^2 + b*s' } },
      structure: { feedback: { forward: 'G', return: null, sign: -1 } },
    })
    // den = s^4 + a s^3 + b s^2 + a b s + k: the third row starts with a b − a b = 0, k > 0 gives two right-half-plane roots.
    const k = quarter(0.5, 3)
    out.push({
      title: `Routh zero first element ${i}`,
      parameters: { a: { value: a }, b: { value: b }, k: { value: k } },
      blocks: { G: { role: 'plant', num: 'k', den: 's^4 + a*s^3 + b*s^2 + a*b*s' } },
      structure: { feedback: { forward: 'G', return: null, sign: -1 } },
    })
  }
  return out
}

const loops: Loop[] = randomLoops()
const special = specialCaseLoops()
let results: CalcResult[] = []
let reference: RefResult[] = []

beforeAll(() => {
  results = [...loops, ...special].map((l) => evaluateLoop(l as never))
  reference = runReference([...loops, ...special], { only: 'roots' })
}, 170_000)

describe('properties of the engine over the random loops', () => {
  it('(a) the closed loop at random complex s equals the structure evaluated directly at s (1e-9 relative)', () => {
    const rnd = seededRandom(99)
    const problems: string[] = []
    let points = 0
    loops.forEach((loop, i) => {
      const r = results[i]!
      for (let k = 0; k < 4; k++) {
        // |s| from 0.1 to 10 rad/s, anywhere in the upper half of the plane (both half-planes of Re s).
        const radius = Math.exp(Math.log(0.1) + rnd() * Math.log(100))
        const angle = 0.05 + rnd() * (Math.PI - 0.1)
        const s = complex(radius * Math.cos(angle), radius * Math.sin(angle))
        const direct = structureAt(loop, loop.structure, s)
        const fromEngine = div(polynomialAt(r.closed_loop.num, s), polynomialAt(r.closed_loop.den, s))
        const gap = Math.hypot(direct.re - fromEngine.re, direct.im - fromEngine.im) / Math.hypot(direct.re, direct.im)
        points++
        if (!(gap <= 1e-9)) problems.push(`#${i} ${loop.title} at s = ${s.toString()}: engine ${fromEngine.toString()}, direct ${direct.toString()}, gap ${gap.toExponential(2)}`)
      }
    })
    expect(points).toBeGreaterThanOrEqual(800)
    expect(problems).toEqual([])
  })

  it('(a) the direct evaluator can fail: a wrong sign on an inner loop is caught', () => {
    const i = loops.findIndex((l) => typeof l.structure !== 'string' && 'feedback' in l.structure)
    const loop = loops[i]!
    const flipped = JSON.parse(JSON.stringify(loop)) as Loop
    ;(flipped.structure as { feedback: { sign: number } }).feedback.sign *= -1
    const s = complex(0.3, 0.7)
    const a = structureAt(flipped, flipped.structure, s)
    const r = results[i]!
    const b = div(polynomialAt(r.closed_loop.num, s), polynomialAt(r.closed_loop.den, s))
    expect(Math.hypot(a.re - b.re, a.im - b.im) / Math.hypot(b.re, b.im)).toBeGreaterThan(1e-6)
  })

  it('(b) Routh sign changes equal the right-half-plane roots counted by numpy, random and special-case loops', () => {
    expect(reference.filter((r) => r.error).map((r) => r.error)).toEqual([])
    const problems: string[] = []
    const all = [...loops, ...special]
    all.forEach((loop, i) => {
      const changes = results[i]!.routh.sign_changes
      const rhp = reference[i]!.routh.sign_changes
      if (changes !== rhp) problems.push(`#${i} ${loop.title}: Routh ${changes} sign changes (${results[i]!.routh.special_case}), numpy ${rhp} right-half-plane roots`)
    })
    expect(problems).toEqual([])
    // The special cases were met, and the counts are not all zero.
    expect(results.slice(loops.length).map((r) => r.routh.special_case)).toEqual(special.map((l) => (l.title.includes('row of zeros') ? 'zero_row' : 'zero_first_element')))
    expect(reference.slice(loops.length).map((r) => r.routh.sign_changes)).toEqual(special.map((l) => (l.title.includes('row of zeros') ? 0 : 2)))
    expect(reference.filter((r) => r.routh.sign_changes > 0).length).toBeGreaterThan(20)
  })
})

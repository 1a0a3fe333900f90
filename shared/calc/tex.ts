import katex from 'katex'
import type { Multinomial, Term } from './multinomial'
import type { Polynomial } from './polynomial'
import { MAX_POLYNOMIAL_TEX_CHARS, SizeLimitError, formatCount } from './limits'
import { type Rational, isNegative } from './rational'

/**
 * The one typesetter of the engine: TeX of numbers, parameters, multinomials
 * and polynomials in s. Everything emitted renders in KaTeX (tests/calc/tex.test.ts).
 */

/** TeX of each parameter, by index; `tex` of the file or the symbol itself. */
export type VariableTex = readonly string[]

/** `K_c` → `K_{c}`; a multi-letter base is set upright-italic as one name so it does not read as a product. */
export function defaultSymbolTex(symbol: string): string {
  const [base = '', ...rest] = symbol.split('_')
  const baseTex = base.length === 1 ? base : `\\mathit{${base}}`
  if (rest.length === 0) return baseTex
  const subscript = rest.join('_')
  return `${baseTex}_{${/^[A-Za-z0-9]$/.test(subscript) ? subscript : `\\mathrm{${subscript.replace(/_/g, '\\_')}}`}}`
}

/** Whether KaTeX typesets `tex`; the error's message when it does not. */
export function texProblem(tex: string): string | null {
  const known = texVerdicts.get(tex)
  if (known !== undefined) return known
  let problem: string | null = null
  try {
    katex.renderToString(tex, { throwOnError: true, strict: 'ignore' })
  } catch (error) {
    problem = error instanceof Error ? error.message : String(error)
  }
  // The same few symbols come back on every keystroke of the live preview: a
  // KaTeX render each time was a tenth of the booster's evaluation (profiled).
  if (texVerdicts.size >= 2048) texVerdicts.clear()
  texVerdicts.set(tex, problem)
  return problem
}

const texVerdicts = new Map<string, string | null>()

/** Block id as a transfer function's name: G_{\mathrm{P}}. */
export function blockNameTex(id: string): string {
  return `G_{\\mathrm{${id.replace(/_/g, '\\_')}}}`
}

/** A positive rational: a short exact decimal where there is one (1/10 → 0.1), else a fraction. */
export function rationalMagnitudeTex(q: Rational): string {
  const n = q.n
  const d = q.d
  if (d === 1n) return n.toString()
  let twos = 0
  let fives = 0
  let rest = d
  while (rest % 2n === 0n) (rest /= 2n), twos++
  while (rest % 5n === 0n) (rest /= 5n), fives++
  const places = Math.max(twos, fives)
  if (rest === 1n && places <= 10) {
    const scaled = (n * 10n ** BigInt(places)) / d
    const digits = scaled.toString().padStart(places + 1, '0')
    return `${digits.slice(0, -places)}.${digits.slice(-places)}`
  }
  return `\\frac{${n}}{${d}}`
}

/** Floating-point numbers for the numeric steps: six significant digits, powers of ten in TeX. */
export function numberTex(x: number): string {
  if (x === 0) return '0'
  if (Number.isInteger(x) && Math.abs(x) < 1e9) return String(x)
  const abs = Math.abs(x)
  if (abs >= 1e-4 && abs < 1e9) return String(Number(x.toPrecision(6)))
  const [mantissa, exponent] = x.toExponential(5).split('e')
  return `${String(Number(mantissa))} \\times 10^{${Number(exponent)}}`
}

function compareTerms(a: Term, b: Term): number {
  const da = a.exponents.reduce((s, e) => s + e, 0)
  const db = b.exponents.reduce((s, e) => s + e, 0)
  if (da !== db) return db - da
  for (let i = 0; i < a.exponents.length; i++) if (a.exponents[i] !== b.exponents[i]) return b.exponents[i]! - a.exponents[i]!
  return 0
}

function monomialTex(exponents: readonly number[], names: VariableTex): string {
  const parts: string[] = []
  exponents.forEach((e, i) => {
    if (e === 1) parts.push(names[i]!)
    else if (e > 1) parts.push(`{${names[i]}}^{${e}}`)
  })
  return parts.join(' ')
}

/** Signed parts ([negative, magnitude TeX]) of a multinomial's terms, highest total degree first. */
function termParts(m: Multinomial, names: VariableTex, trailing = ''): Array<[boolean, string]> {
  return [...m.terms.values()].sort(compareTerms).map((t) => {
    const vars = monomialTex(t.exponents, names)
    const magnitude = t.coefficient.abs()
    const unit = magnitude.n === 1n && magnitude.d === 1n
    const factors = [unit && (vars || trailing) ? '' : rationalMagnitudeTex(magnitude), vars, trailing].filter(Boolean)
    return [isNegative(t.coefficient), factors.join(' ')]
  })
}

function joinSigned(parts: Array<[boolean, string]>): string {
  if (parts.length === 0) return '0'
  return parts.map(([negative, tex], i) => (i === 0 ? (negative ? `-${tex}` : tex) : `${negative ? ' - ' : ' + '}${tex}`)).join('')
}

export function multinomialTex(m: Multinomial, names: VariableTex): string {
  return joinSigned(termParts(m, names))
}

function sPowerTex(k: number): string {
  return k === 0 ? '' : k === 1 ? 's' : `s^{${k}}`
}

/** A polynomial in s collected in powers of s, highest first; a coefficient of several terms in parentheses. */
export function polynomialTex(p: Polynomial, names: VariableTex): string {
  const estimate = texLength(p, names)
  if (estimate > MAX_POLYNOMIAL_TEX_CHARS)
    throw new SizeLimitError(`typesets to about ${formatCount(estimate)} characters of TeX, above the limit of ${formatCount(MAX_POLYNOMIAL_TEX_CHARS)}`)
  const parts: Array<[boolean, string]> = []
  for (let k = p.length - 1; k >= 0; k--) {
    const c = p[k]!
    if (c.isZero) continue
    if (c.terms.size === 1 || k === 0) parts.push(...termParts(c, names, sPowerTex(k)))
    else parts.push([false, `\\left(${multinomialTex(c, names)}\\right) ${sPowerTex(k)}`])
  }
  return joinSigned(parts)
}

/** The TeX's length, roughly, before it is built: each term's symbols and exponents, and a few characters more. */
function texLength(p: Polynomial, names: VariableTex): number {
  let length = 0
  for (const c of p)
    for (const { exponents } of c.terms.values()) {
      length += 12
      exponents.forEach((e, i) => {
        if (e > 0) length += (names[i]?.length ?? 1) + (e > 1 ? 4 : 1)
      })
    }
  return length
}

/** A polynomial as a factor of a product: parenthesised when it has more than one term. */
export function factorTex(p: Polynomial, names: VariableTex): string {
  const tex = polynomialTex(p, names)
  const terms = p.reduce((n, c) => n + c.terms.size, 0)
  return terms > 1 ? `\\left(${tex}\\right)` : tex
}

/** A polynomial with numeric coefficients, highest power first. */
export function numericPolynomialTex(descendingCoefficients: readonly number[]): string {
  const n = descendingCoefficients.length - 1
  const parts: Array<[boolean, string]> = []
  descendingCoefficients.forEach((c, i) => {
    if (c === 0) return
    const k = n - i
    const magnitude = Math.abs(c)
    const power = sPowerTex(k)
    parts.push([c < 0, magnitude === 1 && power ? power : [numberTex(magnitude), power].filter(Boolean).join(' ')])
  })
  return joinSigned(parts)
}

export function fractionTex(num: string, den: string): string {
  return den === '1' ? num : `\\frac{${num}}{${den}}`
}

/** Factors of a product side by side; factors equal to 1 left out, a \cdot before a factor that starts with a digit. */
export function productTex(factors: readonly string[]): string {
  const kept = factors.filter((f) => f !== '1')
  if (kept.length === 0) return '1'
  return kept.map((f, i) => (i === 0 ? f : /^[0-9]/.test(f) ? ` \\cdot ${f}` : ` ${f}`)).join('')
}

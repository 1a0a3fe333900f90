import type { StructureNode } from '../schemas/loop'
import type { BlockModel, LoopParameters } from './blocks'
import { type Deadline, LoopInputError } from './errors'
import { MAX_DEGREE } from './limits'
import { type Polynomial, type TransferFunction, addSigned, degree, multiply, multiplyAll, substituteExact } from './polynomial'
import { type Rational, rationalToNumber } from './rational'
import { blockNameTex, factorTex, fractionTex, multinomialTex, numericPolynomialTex, polynomialTex, productTex } from './tex'

export { structureAt, numericBlocks } from './evaluate'

/**
 * The block diagram reduced to one transfer function, exactly, with the
 * derivation the sheet prints (calc-contract.md, `steps`). Common factors of
 * numerator and denominator are kept: the sheet shows what the reduction gives.
 */

export type StepKind = 'block' | 'series' | 'parallel' | 'feedback' | 'substitution' | 'expansion' | 'numeric' | 'check'
export interface Step {
  kind: StepKind
  title: string
  tex: string
  text: string
}

export interface FeedbackParts {
  forward: StructureNode
  return: StructureNode | null
  sign: 1 | -1
  forwardTf: TransferFunction
  returnTf: TransferFunction | null
}

export interface Reduction {
  closedLoop: TransferFunction
  /** The outermost node when it is a feedback node, else null. */
  outer: FeedbackParts | null
  steps: Step[]
}

interface Options {
  /** Which form of each block to use: the Padé form (default) or the rational part alone. */
  form?: 'approximated' | 'rational'
  steps?: boolean
  deadline?: Deadline
}

interface Reduced {
  tf: TransferFunction
  /** TeX name without the argument: G_{\mathrm{P}}, G_{1}, T_{2}, T. */
  name: string
  /** The block's id when the node is one block, else null. */
  block: string | null
}

/** Blocks in the order the structure first names them. */
export function blockOrder(node: StructureNode, out: string[] = []): string[] {
  if (typeof node === 'string') {
    if (!out.includes(node)) out.push(node)
  } else if ('series' in node) node.series.forEach((n) => blockOrder(n, out))
  else if ('parallel' in node) node.parallel.forEach((n) => blockOrder(n, out))
  else {
    blockOrder(node.feedback.forward, out)
    if (node.feedback.return) blockOrder(node.feedback.return, out)
  }
  return out
}

/** Upper bounds of the degrees each node can reach, checked before any expansion so a huge loop is refused at once. */
export function checkDegrees(node: StructureNode, blocks: ReadonlyMap<string, BlockModel>, path = 'structure'): { num: number; den: number } {
  let bound: { num: number; den: number }
  if (typeof node === 'string') {
    const tf = blocks.get(node)!.approximated
    bound = { num: degree(tf.num), den: degree(tf.den) }
  } else if ('series' in node) {
    const parts = node.series.map((n, i) => checkDegrees(n, blocks, `${path}.series.${i}`))
    bound = { num: parts.reduce((s, p) => s + Math.max(p.num, 0), 0), den: parts.reduce((s, p) => s + p.den, 0) }
  } else if ('parallel' in node) {
    const parts = node.parallel.map((n, i) => checkDegrees(n, blocks, `${path}.parallel.${i}`))
    const den = parts.reduce((s, p) => s + p.den, 0)
    bound = { num: Math.max(...parts.map((p) => p.num - p.den + den)), den }
  } else {
    const g = checkDegrees(node.feedback.forward, blocks, `${path}.feedback.forward`)
    const h = node.feedback.return ? checkDegrees(node.feedback.return, blocks, `${path}.feedback.return`) : { num: 0, den: 0 }
    bound = { num: g.num + h.den, den: Math.max(g.den + h.den, g.num + h.num) }
  }
  const highest = Math.max(bound.num, bound.den)
  if (highest > MAX_DEGREE) throw new LoopInputError(path, `this part of the loop reaches degree ${highest} in s, above the limit of ${MAX_DEGREE}`)
  return bound
}

export function reduceStructure(
  structure: StructureNode,
  blocks: ReadonlyMap<string, BlockModel>,
  parameters: LoopParameters,
  options: Options = {},
): Reduction {
  const form = options.form ?? 'approximated'
  const wantSteps = options.steps ?? true
  const deadline = options.deadline
  const variables = parameters.scope.variables
  const names = parameters.tex
  const steps: Step[] = []
  const counters = { g: 0, t: 0 }
  let outer: FeedbackParts | null = null

  const tfTex = (tf: TransferFunction) => fractionTex(polynomialTex(tf.num, names), polynomialTex(tf.den, names))
  const atValues = (p: Polynomial) => descendingNumbers(substituteExact(p, parameters.exactValues))

  if (wantSteps) {
    for (const id of blockOrder(structure)) {
      const b = blocks.get(id)!
      const name = blockNameTex(id)
      const delayTex = b.delay ? ` e^{-${wrap(fractionTex(multinomialTex(b.delay.num, names), multinomialTex(b.delay.den, names)), b.delay.num.terms.size > 1 || !b.delay.den.isOne)} s}` : ''
      steps.push({ kind: 'block', title: `Block ${id}`, tex: `${name}(s) = ${tfTex(b.rational)}${delayTex}`, text: `Transfer function of block ${id} as entered, collected in powers of s.` })
      if (b.pade) {
        steps.push({
          kind: 'substitution',
          title: `Padé approximation of the dead time of ${id}`,
          tex: `e^{-\\theta s} \\approx ${tfTex(b.pade)}, \\qquad ${name}(s) \\approx ${tfTex(b.approximated)}`,
          text: `The dead time of block ${id} is replaced by its Padé approximant of order ${degree(b.pade.den)} wherever a polynomial is needed; the frequency-domain checks use the exact delay.`,
        })
      }
    }
  }

  function reduce(node: StructureNode, outermost: boolean): Reduced {
    if (typeof node === 'string') {
      const b = blocks.get(node)!
      const tf = form === 'rational' ? b.rational : b.approximated
      if (outermost && wantSteps) steps.push({ kind: 'check', title: 'One block', tex: `T(s) = ${blockNameTex(node)}(s)`, text: `The structure is block ${node} alone.` })
      return { tf, name: blockNameTex(node), block: node }
    }
    if ('series' in node) {
      const parts = node.series.map((n) => reduce(n, false))
      if (parts.length === 1 && !outermost) return parts[0]!
      const tf = {
        num: multiplyAll(parts.map((p) => p.tf.num), variables, deadline),
        den: multiplyAll(parts.map((p) => p.tf.den), variables, deadline),
      }
      const name = outermost ? 'T' : `G_{${++counters.g}}`
      if (wantSteps) {
        const product = fractionTex(productTex(parts.map((p) => factorTex(p.tf.num, names))), productTex(parts.map((p) => factorTex(p.tf.den, names))))
        steps.push({
          kind: 'series',
          title: `Series product ${name === 'T' ? 'T(s)' : name}`.replace(/[{}_]/g, ''),
          tex: `${name}(s) = ${parts.map((p) => `${p.name}(s)`).join('\\,')} = ${product} = ${tfTex(tf)}`,
          text: 'Elements in series multiply: the numerators together over the denominators together.',
        })
      }
      return { tf, name, block: null }
    }
    if ('parallel' in node) {
      const parts = node.parallel.map((n) => reduce(n, false))
      const signs = node.signs ?? parts.map(() => 1 as const)
      const den = multiplyAll(parts.map((p) => p.tf.den), variables, deadline)
      let num: Polynomial = []
      const middle: string[] = []
      parts.forEach((p, i) => {
        const others = parts.filter((_, j) => j !== i)
        num = addSigned(num, multiplyAll([p.tf.num, ...others.map((o) => o.tf.den)], variables, deadline), signs[i]!)
        if (wantSteps) middle.push(`${i === 0 ? (signs[i]! < 0 ? '-' : '') : signs[i]! < 0 ? ' - ' : ' + '}${productTex([p.tf.num, ...others.map((o) => o.tf.den)].map((f) => factorTex(f, names)))}`)
      })
      const tf = { num, den }
      const name = outermost ? 'T' : `G_{${++counters.g}}`
      if (wantSteps) {
        const sum = parts.map((p, i) => `${i === 0 ? (signs[i]! < 0 ? '-' : '') : signs[i]! < 0 ? ' - ' : ' + '}${p.name}(s)`).join('')
        steps.push({
          kind: 'parallel',
          title: `Parallel sum ${name}`.replace(/[{}_]/g, ''),
          tex: `${name}(s) = ${sum} = ${fractionTex(middle.join(''), productTex(parts.map((p) => factorTex(p.tf.den, names))))} = ${tfTex(tf)}`,
          text: 'Parallel paths add with their signs over the common denominator.',
        })
      }
      return { tf, name, block: null }
    }

    const f = node.feedback
    const sign = f.sign ?? -1
    const g = reduce(f.forward, false)
    const h = f.return ? reduce(f.return, false) : null
    // T = G/(1 − σ·G·H) = N_G·D_H / (D_G·D_H − σ·N_G·N_H), σ = −1 for negative feedback.
    const loopSign = sign === -1 ? 1 : -1
    const tf: TransferFunction = h
      ? {
          num: multiply(g.tf.num, h.tf.den, deadline),
          den: addSigned(multiply(g.tf.den, h.tf.den, deadline), multiply(g.tf.num, h.tf.num, deadline), loopSign),
        }
      : { num: g.tf.num, den: addSigned(g.tf.den, g.tf.num, loopSign) }
    const name = outermost ? 'T' : `T_{${++counters.t}}`
    if (outermost) outer = { forward: f.forward, return: f.return ?? null, sign, forwardTf: g.tf, returnTf: h?.tf ?? null }
    if (tf.den.length === 0) throw new LoopInputError('structure', `the closed loop ${name === 'T' ? 'T(s)' : name} has a denominator that is identically zero (1 ${sign === 1 ? '−' : '+'} G·H = 0 for every s)`)
    if (wantSteps) {
      const op = loopSign === 1 ? '+' : '-'
      const title = name === 'T' ? 'closed loop T(s)' : `inner closed loop ${name.replace(/[{}_]/g, '')}`
      const feedbackWords = sign === -1 ? 'negative' : 'positive'
      const forward = pathWords(g)
      steps.push({
        kind: 'feedback',
        title: `Feedback: ${title}`,
        tex: h ? `${name}(s) = \\frac{${g.name}(s)}{1 ${op} ${g.name}(s)\\,${h.name}(s)}` : `${name}(s) = \\frac{${g.name}(s)}{1 ${op} ${g.name}(s)}`,
        text: h
          ? `The forward path${forward} closed with ${feedbackWords} feedback through ${pathWords(h).replace(/^,? ?|,$/g, '')} on the return path.`
          : `The forward path${forward} closed with ${feedbackWords} unity feedback.`,
      })
      const [nG, dG] = [factorTex(g.tf.num, names), factorTex(g.tf.den, names)]
      const [nH, dH] = h ? [factorTex(h.tf.num, names), factorTex(h.tf.den, names)] : ['1', '1']
      steps.push({
        kind: 'feedback',
        title: 'Numerator and denominator form',
        tex: h
          ? `${name}(s) = \\frac{N_G D_H}{D_G D_H ${op} N_G N_H} = \\frac{${productTex([nG, dH])}}{${productTex([dG, dH])} ${op} ${productTex([nG, nH])}}`
          : `${name}(s) = \\frac{N_G}{D_G ${op} N_G} = \\frac{${nG}}{${dG} ${op} ${nG}}`,
        // Plain words (calc-contract.md: `tex` holds the TeX, `text` the sentence); the symbols are the formula's own.
        text: h
          ? 'Each path written as numerator over denominator (N over D, with subscript G for the forward path and H for the return path), then multiplied through by both denominators: polynomials only.'
          : 'The forward path written as numerator over denominator (N over D, with subscript G), then multiplied through by its denominator: polynomials only.',
      })
      steps.push({ kind: 'expansion', title: 'Expanded and collected in powers of s', tex: `${name}(s) = ${tfTex(tf)}`, text: 'Both polynomials multiplied out and collected in powers of s; no common factor is cancelled.' })
      const num = atValues(tf.num)
      const den = atValues(tf.den)
      steps.push({
        kind: 'substitution',
        title: 'Parameters at their values',
        tex: `${name}(s) = ${fractionTex(numericPolynomialTex(num), numericPolynomialTex(den))}`,
        text: 'The parameters\' values substituted into the exact coefficients.',
      })
      steps.push({
        kind: 'check',
        title: 'Orders',
        tex: `\\text{numerator: order } ${num.length - 1}, \\quad \\text{denominator: order } ${den.length - 1}`,
        text: orderText(tf, num, den),
      })
    }
    return { tf, name, block: null }
  }

  const top = reduce(structure, true)
  return { closedLoop: top.tf, outer, steps }
}

/**
 * A path of a feedback node in the words of a sentence, as the titles name it (G1, T1), or the block it is: the
 * text of a step holds no TeX (its formula does). Answers the words with the space or commas that set them off.
 */
function pathWords(path: Reduced): string {
  return path.block === null ? ` ${path.name.replace(/[{}_]/g, '')}` : `, block ${path.block},`
}

function orderText(tf: TransferFunction, num: number[], den: number[]): string {
  const symbolic = `numerator of order ${degree(tf.num)}, denominator of order ${degree(tf.den)}`
  const numeric = `numerator of order ${num.length - 1}, denominator of order ${den.length - 1}`
  return symbolic === numeric ? `The closed loop has a ${numeric}.` : `Symbolically a ${symbolic}; at the parameters' values a ${numeric}, as leading coefficients vanish.`
}

function wrap(tex: string, parenthesise: boolean): string {
  return parenthesise ? `\\left(${tex}\\right)` : tex
}

/** Exact coefficients (lowest power first) as doubles, highest power first, [0] for zero. */
export function descendingNumbers(ascending: readonly Rational[]): number[] {
  if (ascending.length === 0) return [0]
  return ascending.map(rationalToNumber).reverse()
}

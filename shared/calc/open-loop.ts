import type { StructureNode } from '../schemas/loop'
import type { BlockModel, LoopParameters } from './blocks'
import type { Deadline } from './errors'
import { type NumericBlock, loopGainAt } from './evaluate'
import { type Polynomial, type TransferFunction, compilePolynomial, multiply, negate } from './polynomial'
import { type FeedbackParts, reduceStructure } from './reduce'
import type { OpenLoop } from './types'

/**
 * L(s) = forward × return of the outermost feedback node (calc-contract.md,
 * `open_loop`). Where every dead time sits in series along the loop,
 * L = R(s)·e^(−sθ) exactly and the numerics get the rational part R and θ;
 * otherwise (a delay inside an inner loop or a parallel path) they get the
 * Padé form with `delay_s` null, and `at` is exact in both cases.
 *
 * For positive feedback the characteristic equation is 1 − L = 0, so the
 * margins are referred to −1 through −L: the numerics receive −L.
 */
export interface OpenLoopModel {
  /** L as the contract lists it (not negated). */
  tf: TransferFunction
  /** Ids of the blocks whose dead times multiply L exactly, or null when L has no such form. */
  delayBlocks: string[] | null
  /** +1 when the numerics receive L, −1 when they receive −L (positive feedback). */
  referredSign: 1 | -1
  forward: StructureNode
  return: StructureNode | null
}

/** Dead-time blocks that are pure factors of the node, or null where one sits inside a parallel path or an inner loop. */
function seriesDelayBlocks(node: StructureNode, blocks: ReadonlyMap<string, BlockModel>): string[] | null {
  if (typeof node === 'string') return blocks.get(node)!.delay ? [node] : []
  if ('series' in node) {
    const out: string[] = []
    for (const n of node.series) {
      const inner = seriesDelayBlocks(n, blocks)
      if (inner === null) return null
      out.push(...inner)
    }
    return out
  }
  const children = 'parallel' in node ? node.parallel : [node.feedback.forward, ...(node.feedback.return ? [node.feedback.return] : [])]
  return children.some((c) => hasDelay(c, blocks)) ? null : []
}

function hasDelay(node: StructureNode, blocks: ReadonlyMap<string, BlockModel>): boolean {
  if (typeof node === 'string') return blocks.get(node)!.delay !== null
  if ('series' in node) return node.series.some((n) => hasDelay(n, blocks))
  if ('parallel' in node) return node.parallel.some((n) => hasDelay(n, blocks))
  return hasDelay(node.feedback.forward, blocks) || (node.feedback.return ? hasDelay(node.feedback.return, blocks) : false)
}

export function openLoopModel(outer: FeedbackParts, blocks: ReadonlyMap<string, BlockModel>, parameters: LoopParameters, deadline?: Deadline): OpenLoopModel {
  const forwardDelays = seriesDelayBlocks(outer.forward, blocks)
  const returnDelays = outer.return ? seriesDelayBlocks(outer.return, blocks) : []
  const delayBlocks = forwardDelays && returnDelays ? [...forwardDelays, ...returnDelays] : null
  let forward = outer.forwardTf
  let ret = outer.returnTf
  if (delayBlocks && delayBlocks.length > 0) {
    // The rational part alone: the same reduction with each block's dead time left out.
    forward = reduceStructure(outer.forward, blocks, parameters, { form: 'rational', steps: false, deadline }).closedLoop
    ret = outer.return ? reduceStructure(outer.return, blocks, parameters, { form: 'rational', steps: false, deadline }).closedLoop : null
  }
  const tf = ret ? { num: multiply(forward.num, ret.num, deadline), den: multiply(forward.den, ret.den, deadline) } : forward
  return { tf, delayBlocks, referredSign: outer.sign === 1 ? -1 : 1, forward: outer.forward, return: outer.return }
}

/** Numbers of L at a set of parameter values, highest power first, normalised so den[0] = 1. */
export function normalised(num: number[], den: number[]): { num: number[]; den: number[] } {
  let i = 0
  while (i < den.length - 1 && den[i] === 0) i++
  const lead = den[i]!
  let j = 0
  while (j < num.length - 1 && num[j] === 0) j++
  return { num: num.slice(j).map((c) => c / lead), den: den.slice(i).map((c) => c / lead) }
}

/** A factory of the numerics' OpenLoop at any parameter values (compiled once, for the tolerance corners). */
export function openLoopAt(model: OpenLoopModel): (values: ArrayLike<number>, numeric: ReadonlyMap<string, NumericBlock>, exactNumbers?: { num: number[]; den: number[] }) => OpenLoop {
  const num = compilePolynomial(model.referredSign === 1 ? model.tf.num : negate(model.tf.num as Polynomial))
  const den = compilePolynomial(model.tf.den)
  return (values, numeric, exactNumbers) => {
    const n = exactNumbers ? exactNumbers.num.map((c) => model.referredSign * c) : num(values).reverse()
    const d = exactNumbers ? exactNumbers.den : den(values).reverse()
    const { num: nn, den: dd } = normalised(n.length ? n : [0], d)
    const delay = model.delayBlocks ? model.delayBlocks.reduce((sum, id) => sum + numeric.get(id)!.delay, 0) : null
    const sign = model.referredSign
    return {
      num: nn,
      den: dd,
      delay_s: delay,
      at: (s) => {
        const v = loopGainAt(model.forward, model.return, numeric, s)
        return sign === 1 ? v : { re: -v.re, im: -v.im }
      },
    }
  }
}

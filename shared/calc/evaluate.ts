import type { StructureNode } from '../schemas/loop'
import type { BlockModel } from './blocks'
import type { Complex } from './types'

/**
 * Any node of the block diagram evaluated at a complex s with the parameters
 * at given values and every dead time exact (e^(−sθ)). Used for L(jω) of the
 * frequency-domain checks and by the property tests against the reduction.
 */

/** A block at particular parameter values: coefficients lowest power first, θ in s. */
export interface NumericBlock {
  num: number[]
  den: number[]
  delay: number
}

/** Compiles every block once; the returned function gives the blocks at any parameter values. */
export function numericBlocks(blocks: ReadonlyMap<string, BlockModel>): (values: ArrayLike<number>) => Map<string, NumericBlock> {
  const compiled = [...blocks.values()].map((b) => ({
    id: b.id,
    num: b.rational.num.map((c) => c.compile()),
    den: b.rational.den.map((c) => c.compile()),
    delayNum: b.delay?.num.compile() ?? null,
    delayDen: b.delay?.den.compile() ?? null,
  }))
  return (values) =>
    new Map(
      compiled.map((c) => [
        c.id,
        {
          num: c.num.map((f) => f(values)),
          den: c.den.map((f) => f(values)),
          delay: c.delayNum && c.delayDen ? c.delayNum(values) / c.delayDen(values) : 0,
        },
      ]),
    )
}

function polynomialAt(ascending: readonly number[], s: Complex): Complex {
  let re = 0
  let im = 0
  for (let k = ascending.length - 1; k >= 0; k--) {
    const r = re * s.re - im * s.im + ascending[k]!
    im = re * s.im + im * s.re
    re = r
  }
  return { re, im }
}

function times(a: Complex, b: Complex): Complex {
  return { re: a.re * b.re - a.im * b.im, im: a.re * b.im + a.im * b.re }
}

function over(a: Complex, b: Complex): Complex {
  // Smith's division keeps the quotient accurate when |b| is very large or small.
  if (Math.abs(b.re) >= Math.abs(b.im)) {
    const r = b.im / b.re
    const d = b.re + b.im * r
    return { re: (a.re + a.im * r) / d, im: (a.im - a.re * r) / d }
  }
  const r = b.re / b.im
  const d = b.re * r + b.im
  return { re: (a.re * r + a.im) / d, im: (a.im * r - a.re) / d }
}

export function blockAt(block: NumericBlock, s: Complex): Complex {
  const value = over(polynomialAt(block.num, s), polynomialAt(block.den, s))
  if (block.delay === 0) return value
  // e^(−sθ) = e^(−θ·Re s) (cos(θ·Im s) − j sin(θ·Im s))
  const magnitude = Math.exp(-block.delay * s.re)
  return times(value, { re: magnitude * Math.cos(block.delay * s.im), im: -magnitude * Math.sin(block.delay * s.im) })
}

export function structureAt(node: StructureNode, blocks: ReadonlyMap<string, NumericBlock>, s: Complex): Complex {
  if (typeof node === 'string') return blockAt(blocks.get(node)!, s)
  if ('series' in node) return node.series.reduce((acc, n) => times(acc, structureAt(n, blocks, s)), { re: 1, im: 0 })
  if ('parallel' in node) {
    return node.parallel.reduce(
      (acc, n, i) => {
        const v = structureAt(n, blocks, s)
        const sign = node.signs?.[i] ?? 1
        return { re: acc.re + sign * v.re, im: acc.im + sign * v.im }
      },
      { re: 0, im: 0 },
    )
  }
  const g = structureAt(node.feedback.forward, blocks, s)
  const loop = node.feedback.return ? times(g, structureAt(node.feedback.return, blocks, s)) : g
  const sign = node.feedback.sign ?? -1
  return over(g, { re: 1 - sign * loop.re, im: -sign * loop.im })
}

/** L(s) = forward × return of a feedback node (forward alone for unity feedback). */
export function loopGainAt(forward: StructureNode, ret: StructureNode | null, blocks: ReadonlyMap<string, NumericBlock>, s: Complex): Complex {
  const g = structureAt(forward, blocks, s)
  return ret ? times(g, structureAt(ret, blocks, s)) : g
}

import { loopParameters, readBlock, type BlockModel, type LoopParameters } from '../../../shared/calc/blocks'
import type { Multinomial } from '../../../shared/calc/multinomial'
import type { Polynomial } from '../../../shared/calc/polynomial'
import { loopFileSchema, type LoopFile, type LoopFileInput } from '../../../shared/schemas/loop'
import { spawnSync } from 'node:child_process'

/** A multinomial as sympy reads it: (3/2)*Kc**1*Ti**2 + ... */
export function multinomialText(m: Multinomial, symbols: readonly string[]): string {
  const terms = [...m.terms.values()].map((t) => {
    const factors = [`(${t.coefficient.toFraction()})`]
    t.exponents.forEach((e, i) => e > 0 && factors.push(`${symbols[i]}**${e}`))
    return factors.join('*')
  })
  return terms.length ? terms.join(' + ') : '0'
}

export function polynomialText(p: Polynomial, symbols: readonly string[]): string {
  const terms = p.map((c, k) => (c.isZero ? '' : `(${multinomialText(c, symbols)})*s**${k}`)).filter(Boolean)
  return terms.length ? terms.join(' + ') : '0'
}

export function modelOf(input: LoopFileInput): { loop: LoopFile; parameters: LoopParameters; blocks: Map<string, BlockModel> } {
  const loop = loopFileSchema.parse(input)
  const parameters = loopParameters(loop)
  const blocks = new Map(Object.keys(loop.blocks).map((id) => [id, readBlock(id, loop, parameters, loop.delay_approximation.order)]))
  return { loop, parameters, blocks }
}

/** Runs a Python script with Debian's python3-sympy; the JSON it prints comes back. */
export function python<T>(script: string, input: unknown): T {
  const run = spawnSync('python3', ['-c', script], { input: JSON.stringify(input), encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 })
  if (run.status !== 0) throw new Error(`python3 failed: ${run.stderr}`)
  return JSON.parse(run.stdout) as T
}

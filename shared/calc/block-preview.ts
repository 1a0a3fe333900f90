import type { LoopFile } from '../schemas/loop'
import { symbolProblem } from '../schemas/loop'
import { type BlockModel, loopParameters, readBlock } from './blocks'
import { LoopInputError } from './errors'
import { readExpression } from './expression'
import { fractionTex, blockNameTex, multinomialTex, polynomialTex, texProblem } from './tex'

/**
 * Each block typeset on its own, as the sheet editor shows it while the engineer types: a message at each field
 * the expression parser refuses, independent of the other blocks and of the structure, so one half-typed field
 * does not blank the others. Parameters whose value is no finite number (half typed) are left out of the scope,
 * so an expression using one says the parameter is not defined.
 */
export interface BlockPreview {
  /** `G_{P}(s) = …`, or null while a field of the block does not parse. */
  tex: string | null
  /** Field (`num`, `den`, `delay`) → the parser's reason. */
  problems: Partial<Record<'num' | 'den' | 'delay', string>>
}

export interface PreviewInput {
  parameters: Record<string, { value: unknown; tex?: string }>
  blocks: Record<string, { num?: string; den?: string; delay?: string }>
  padeOrder?: number
}

export function previewBlocks(input: PreviewInput): Record<string, BlockPreview> {
  const parameters: LoopFile['parameters'] = {}
  for (const [symbol, p] of Object.entries(input.parameters)) {
    if (symbolProblem(symbol) || typeof p.value !== 'number' || !Number.isFinite(p.value)) continue
    parameters[symbol] = { value: p.value, ...(p.tex && !texProblem(p.tex) ? { tex: p.tex } : {}) }
  }
  const blocks: LoopFile['blocks'] = {}
  for (const [id, b] of Object.entries(input.blocks)) blocks[id] = { role: 'other', num: b.num ?? '', den: b.den?.trim() ? b.den : '1', ...(b.delay?.trim() ? { delay: b.delay } : {}) }
  const loop = { parameters, blocks, structure: Object.keys(blocks)[0] ?? '', delay_approximation: { method: 'pade', order: input.padeOrder ?? 2 }, analysis: {}, criteria: {} } as LoopFile
  const scope = loopParameters(loop)
  const previews: Record<string, BlockPreview> = {}
  for (const [id, block] of Object.entries(blocks)) {
    const problems: BlockPreview['problems'] = {}
    for (const field of ['num', 'den', 'delay'] as const) {
      const text = block[field]
      if (text === undefined) continue
      if (!text.trim()) {
        problems[field] = field === 'num' ? 'Enter the numerator' : 'Enter the denominator'
        continue
      }
      try {
        readExpression(text, `blocks.${id}.${field}`, scope.scope, { sAllowed: field !== 'delay' })
      } catch (error) {
        if (error instanceof LoopInputError) problems[field] = error.reason
        else throw error
      }
    }
    let tex: string | null = null
    if (Object.keys(problems).length === 0) {
      try {
        tex = blockTex(readBlock(id, loop, scope, loop.delay_approximation.order), scope.tex)
      } catch (error) {
        if (!(error instanceof LoopInputError)) throw error
        const field = error.field.split('.').at(-1) as 'num' | 'den' | 'delay'
        problems[['num', 'den', 'delay'].includes(field) ? field : 'num'] = error.reason
      }
    }
    previews[id] = { tex, problems }
  }
  return previews
}

/** The block as entered, the same TeX as the derivation's `block` step (reduce.ts). */
function blockTex(block: BlockModel, names: readonly string[]): string {
  const rational = fractionTex(polynomialTex(block.rational.num, names), polynomialTex(block.rational.den, names))
  if (!block.delay) return `${blockNameTex(block.id)}(s) = ${rational}`
  const theta = block.delay.den.isOne ? multinomialTex(block.delay.num, names) : fractionTex(multinomialTex(block.delay.num, names), multinomialTex(block.delay.den, names))
  const wrapped = block.delay.num.terms.size > 1 || !block.delay.den.isOne ? `\\left(${theta}\\right)` : theta
  return `${blockNameTex(block.id)}(s) = ${rational}\\, e^{-${wrapped} s}`
}

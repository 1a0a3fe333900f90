// The loop file's text becomes part of the sheet document, stored as PostgreSQL jsonb, which refuses a NUL
// character and a lone UTF-16 surrogate (PostgreSQL documentation, "JSON Types": \u0000 is not accepted, and
// an unpaired surrogate escape is an error). Every text of the loop file and the record keys refuse them with
// the field named, as calc-contract.md's "Bad input" asks.
import { describe, expect, it } from 'vitest'
import { LoopInputError, evaluateLoop } from '../../shared/calc/index'
import { sheetDocumentSchema } from '../../shared/schemas/sheet'

const base = () => ({
  title: 'Storable text case',
  parameters: { K: { value: 2, unit: '1', tex: 'K', note: 'proposed' } } as Record<string, Record<string, unknown>>,
  blocks: { G: { role: 'plant', label: 'plant', num: 'K', den: 's + 1' } } as Record<string, Record<string, unknown>>,
  structure: { feedback: { forward: 'G', return: null, sign: -1 } } as unknown,
})

function refusal(loop: unknown): LoopInputError {
  try {
    evaluateLoop(loop)
  } catch (error) {
    if (error instanceof LoopInputError) return error
    throw error
  }
  throw new Error('the loop was computed, not refused')
}

describe('loop file text that cannot be stored is refused, naming the field', () => {
  const nul = '\u0000'
  const lone = '\ud800'
  it.each([
    ['title', (l: ReturnType<typeof base>) => Object.assign(l, { title: `x${nul}` }), 'title'],
    ['a unit', (l: ReturnType<typeof base>) => (l.parameters.K!.unit = `%${lone}`), 'parameters.K.unit'],
    ['a note', (l: ReturnType<typeof base>) => (l.parameters.K!.note = `from ${nul}`), 'parameters.K.note'],
    ['a symbol’s TeX', (l: ReturnType<typeof base>) => (l.parameters.K!.tex = `K_${lone}`), 'parameters.K.tex'],
    ['a label', (l: ReturnType<typeof base>) => (l.blocks.G!.label = `pump${nul}`), 'blocks.G.label'],
    ['an expression', (l: ReturnType<typeof base>) => (l.blocks.G!.den = `s + 1${lone}`), 'blocks.G.den'],
    ['a parameter symbol', (l: ReturnType<typeof base>) => (l.parameters[`K${nul}`] = { value: 1 }), `parameters.K${nul}`],
    ['a block id', (l: ReturnType<typeof base>) => (l.blocks[`H${lone}`] = { role: 'sensor', num: '1' }), `blocks.H${lone}`],
    ['a block named in the structure', (l: ReturnType<typeof base>) => (l.structure = { feedback: { forward: `G${nul}` } }), 'structure.feedback.forward'],
  ])('%s', (_, change, field) => {
    const loop = base()
    change(loop)
    expect(refusal(loop).field).toBe(field)
  })

  it('computes the same loop with ordinary text (the refusals above are the text, not the loop)', () => {
    expect(evaluateLoop(base()).stability).toBe('stable')
  })

  it('refuses the same in the sheet document’s own text', () => {
    const document = { loop: base(), parameters: [{ symbol: 'K', description: `gain${nul}`, source: '' }], blockOrder: ['G'] }
    const result = sheetDocumentSchema.safeParse(document)
    expect(result.success).toBe(false)
    expect(result.error!.issues.map((issue) => issue.path.join('.'))).toEqual(['parameters.0.description'])
  })
})

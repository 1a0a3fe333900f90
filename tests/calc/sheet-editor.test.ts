// The sheet editor's plain parts, outside the browser: the form read back into the same sheet document, the
// structure edits, the loop diagram's layout and the blocks typeset on their own. The engine is the witness for
// the typeset blocks (its derivation's `block` steps); the templates of sheets/ are the inputs.
import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { evaluateLoop } from '../../shared/calc'
import { previewBlocks } from '../../shared/calc/block-preview'
import { documentOfLoopFile, loopFileOf, sheetDocumentSchema } from '../../shared/schemas/sheet'
import { layoutLoopDiagram } from '../../app/utils/loopDiagramLayout'
import { conflictUnits, mergeForms } from '../../app/utils/sheetConflict'
import { documentOfForm, formOfDocument } from '../../app/utils/sheetForm'
import { addInParallel, addInSeries, closeLoopAround, openLoop, removeAt, renameBlock, structureText } from '../../app/utils/structureTree'

const templates = ['pi-pressure-loop', 'cascade-loop', 'dead-time-flow-loop', 'integrating-level-loop']
const loopOf = (name: string) => {
  const file = JSON.parse(readFileSync(new URL(`../../sheets/${name}.json`, import.meta.url), 'utf8'))
  // sheets-api turns the templates into whole sheets ({ title, loopTag, document }); either shape reads here.
  return (file.document?.loop ?? file) as Parameters<typeof documentOfLoopFile>[0]
}

describe('the sheet form', () => {
  it.each(templates)('reads %s back into the same loop file', (name) => {
    const loop = loopOf(name)
    const document = sheetDocumentSchema.parse(documentOfLoopFile(loop))
    const form = formOfDocument(document, loop.title ?? 'Sheet', 'TAG-1')
    const reading = documentOfForm(form)
    expect(reading.problems).toEqual({})
    expect(reading.valid).not.toBeNull()
    // An empty unit and no unit are one empty field on the form: the form writes neither.
    const withoutEmptyUnits = (file: ReturnType<typeof loopFileOf>) =>
      JSON.parse(JSON.stringify(file, (key, value) => (key === 'unit' && value === '' ? undefined : value)))
    expect(loopFileOf(reading.valid!)).toEqual(withoutEmptyUnits(loopFileOf(document)))
  })

  it('keeps a half-typed number as typed and names its field', () => {
    const document = sheetDocumentSchema.parse(documentOfLoopFile(loopOf('pi-pressure-loop')))
    const form = formOfDocument(document, 'Booster', 'PIC-214-01')
    form.parameters[0]!.value = '1.2e'
    form.parameters[0]!.min = '2'
    const reading = documentOfForm(form)
    expect(reading.valid).toBeNull()
    expect(reading.problems['parameters[0].value']).toBe('"1.2e" is not a number')
    expect(form.parameters[0]!.value).toBe('1.2e')
  })

  it('maps the shared schema\'s issues to the form\'s fields', () => {
    const document = sheetDocumentSchema.parse(documentOfLoopFile(loopOf('pi-pressure-loop')))
    const form = formOfDocument(document, 'Booster', 'PIC-214-01')
    const symbol = form.parameters[0]!.symbol
    form.parameters[0]!.min = '5'
    form.parameters[0]!.max = '1'
    form.blocks[0]!.num = '   '
    const reading = documentOfForm(form)
    expect(reading.problems['parameters[0].min']).toBe('min 5 is above max 1')
    expect(reading.problems['blocks[0].num']).toBe('Enter the numerator')
    expect(symbol).toBeTruthy()
  })
})

describe('the structure editor', () => {
  const booster = { feedback: { forward: { series: ['C', 'P'] }, return: 'H', sign: -1 as const } }
  it('nests an inner loop and extends its forward path: a cascade', () => {
    const inner = closeLoopAround(booster, ['forward', 1])
    expect(inner).toEqual({ feedback: { forward: { series: ['C', { feedback: { forward: 'P', return: null, sign: -1 } }] }, return: 'H', sign: -1 } })
    const cascade = addInSeries(inner, ['forward', 1, 'forward'], 'F')
    expect(structureText(cascade)).toBe('loop(C · loop(P · F; return unity; negative); return H; negative)')
    expect(openLoop(cascade, ['forward', 1])).toEqual({ feedback: { forward: { series: ['C', { series: ['P', 'F'] }] }, return: 'H', sign: -1 } })
  })
  it('adds and removes parallel paths with their signs, and renames a block everywhere', () => {
    const parallel = addInParallel(booster, ['forward', 0], 'D')
    expect(parallel).toEqual({ feedback: { forward: { series: [{ parallel: ['C', 'D'], signs: [1, 1] }, 'P'] }, return: 'H', sign: -1 } })
    expect(removeAt(parallel, ['forward', 0, 1])).toEqual(booster)
    expect(structureText(renameBlock(booster, 'P', 'Pump'))).toBe('loop(C · Pump; return H; negative)')
  })
})

describe('the loop diagram', () => {
  it('draws one block per place, one junction per loop and per parallel, and keeps every block inside the drawing', () => {
    const loop = loopOf('cascade-loop')
    const layout = layoutLoopDiagram(loop.structure, {})
    const blocks = layout.shapes.filter((s) => s.kind === 'block')
    expect(blocks.map((b) => (b.kind === 'block' ? b.id : '')).sort()).toEqual(['C1', 'C2', 'F', 'T'])
    expect(layout.shapes.filter((s) => s.kind === 'junction')).toHaveLength(2)
    for (const b of blocks) if (b.kind === 'block') {
      expect(b.x).toBeGreaterThanOrEqual(0)
      expect(b.y).toBeGreaterThanOrEqual(0)
      expect(b.x + b.w).toBeLessThanOrEqual(layout.width)
      expect(b.y + b.h).toBeLessThanOrEqual(layout.height)
    }
    // No two blocks overlap.
    const boxes = blocks.flatMap((b) => (b.kind === 'block' ? [b] : []))
    for (const a of boxes) for (const b of boxes) if (a !== b) expect(a.x + a.w <= b.x || b.x + b.w <= a.x || a.y + a.h <= b.y || b.y + b.h <= a.y).toBe(true)
  })
  it('puts a return block beneath its forward path, fed from the right', () => {
    const layout = layoutLoopDiagram({ feedback: { forward: { series: ['C', 'P'] }, return: 'H', sign: -1 } }, { H: 'Pressure transmitter' })
    const find = (id: string) => layout.shapes.find((s) => s.kind === 'block' && s.id === id) as Extract<(typeof layout.shapes)[number], { kind: 'block' }>
    expect(find('H').y).toBeGreaterThan(find('P').y + find('P').h)
    expect(find('H').lines).toEqual(['H', 'Pressure transmitter'])
    expect(layout.shapes.filter((s) => s.kind === 'sign').map((s) => (s.kind === 'sign' ? s.text : ''))).toEqual(['+', '−'])
  })
})

describe('blocks typeset on their own', () => {
  it.each(templates)('typeset %s as the engine\'s derivation does', (name) => {
    const loop = loopOf(name)
    const previews = previewBlocks({ parameters: loop.parameters ?? {}, blocks: loop.blocks as never, padeOrder: loop.delay_approximation?.order })
    const steps = evaluateLoop(loop).steps.filter((step) => step.kind === 'block')
    for (const step of steps) {
      const id = step.title.replace(/^Block /, '')
      expect(previews[id]?.problems).toEqual({})
      expect(previews[id]?.tex?.replace(/\\, /g, ' ')).toBe(step.tex)
    }
  })
  it('names the field that does not parse and still typesets the others', () => {
    const loop = loopOf('pi-pressure-loop')
    const [first, second] = Object.keys(loop.blocks)
    const blocks = { ...loop.blocks, [first!]: { ...loop.blocks[first!]!, den: 's^' }, [second!]: { ...loop.blocks[second!]!, num: 'Kq' } }
    const previews = previewBlocks({ parameters: loop.parameters ?? {}, blocks: blocks as never })
    // The message is the engine's own for the whole loop file (calc-contract.md, "Bad input").
    expect(previews[first!]!.problems.den).toBe('"s^" is not a complete expression')
    expect(previews[first!]!.tex).toBeNull()
    expect(previews[second!]!.problems.num).toMatch(/Kq/)
    for (const id of Object.keys(loop.blocks).slice(2)) expect(previews[id]!.tex).toMatch(/^G_/)
  })
})

describe('a stale save set side by side', () => {
  it('starts each field on the side that changed it, and keeps both sides\' edits when merged', () => {
    const document = sheetDocumentSchema.parse(documentOfLoopFile(loopOf('pi-pressure-loop')))
    const base = formOfDocument(document, 'Booster', 'PIC-214-01')
    const mine = structuredClone(base)
    const stored = structuredClone(base)
    mine.conclusions = 'Mine: the loop meets its criteria.'
    stored.scope = 'Stored: the discharge pressure loop of the booster station.'
    stored.assumptions = ['Stored: the header is rigid.']
    const units = conflictUnits(mine, stored, base)
    expect(units.map((u) => [u.key, u.proposed])).toEqual([['scope', 'stored'], ['conclusions', 'mine'], ['assumptions[0]', 'stored']])
    const merged = mergeForms(mine, stored, new Set(units.filter((u) => u.proposed === 'stored').map((u) => u.key)))
    expect(merged.conclusions).toBe(mine.conclusions)
    expect(merged.scope).toBe(stored.scope)
    expect(merged.assumptions).toEqual(stored.assumptions)
    expect(conflictUnits(merged, merged, base)).toEqual([])
  })
})

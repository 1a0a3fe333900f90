import { z } from 'zod'
import { criterionBounds, loopFileSchema, type CriterionName, type LoopFile, type LoopFileInput } from './loop'
import { plainText, recordKey } from './text'

/**
 * The sheet document: everything an engineer writes on one revision of a calculation sheet, stored whole as one
 * jsonb value (sheet_revisions.document). The loop file of calc-contract.md is a part of it (`loop`), and stays
 * the engine's input. PostgreSQL's jsonb does not keep the order of an object's keys, so the print order of the
 * parameters and blocks is held in arrays beside the loop (`parameters`, `blockOrder`).
 */

/** A sheet's states (product.md, "A sheet's life"). */
export const sheetStatuses = ['draft', 'in check', 'returned', 'approved', 'issued', 'superseded'] as const
export type SheetStatus = (typeof sheetStatuses)[number]

/** One row of the parameter table beside the loop's numbers: what the symbol is and where its value comes from. */
export const parameterDetailSchema = z.object({
  symbol: recordKey,
  description: plainText(300),
  source: plainText(1000),
})
export type ParameterDetail = z.infer<typeof parameterDetailSchema>

export const referenceSchema = z.object({
  title: plainText(300, 1, 'Enter the reference'),
  /** A document number, standard or clause, e.g. "ISA-5.1-2022". */
  identifier: plainText(120).optional(),
  note: plainText(1000).optional(),
})
export type SheetReference = z.infer<typeof referenceSchema>

export const sheetDocumentSchema = z
  .object({
    loop: loopFileSchema,
    /** Every parameter of `loop.parameters` once, in print order. */
    parameters: z.array(parameterDetailSchema).max(200).default([]),
    /** Every block id of `loop.blocks` once, in print order. */
    blockOrder: z.array(recordKey).max(64).default([]),
    scope: plainText(20_000).default(''),
    references: z.array(referenceSchema).max(100).default([]),
    assumptions: z.array(plainText(2000, 1, 'Enter the assumption, or remove it')).max(100).default([]),
    conclusions: plainText(20_000).default(''),
    /** The engineer's own safety notes; the firm's default cautions (firm settings) are always printed too. */
    safetyNotes: z.array(plainText(2000, 1, 'Enter the note, or remove it')).max(50).default([]),
  })
  .superRefine((document, ctx) => {
    const symbols = Object.keys(document.loop.parameters)
    const listed = document.parameters.map((p) => p.symbol)
    listed.forEach((symbol, i) => {
      if (!symbols.includes(symbol)) ctx.addIssue({ code: 'custom', path: ['parameters', i, 'symbol'], message: `"${symbol}" is not a parameter of the loop` })
      else if (listed.indexOf(symbol) !== i) ctx.addIssue({ code: 'custom', path: ['parameters', i, 'symbol'], message: `"${symbol}" is listed twice` })
    })
    for (const symbol of symbols)
      if (!listed.includes(symbol)) ctx.addIssue({ code: 'custom', path: ['parameters'], message: `parameter "${symbol}" is missing from the parameter table` })
    const ids = Object.keys(document.loop.blocks)
    document.blockOrder.forEach((id, i) => {
      if (!ids.includes(id)) ctx.addIssue({ code: 'custom', path: ['blockOrder', i], message: `"${id}" is not a block of the loop` })
      else if (document.blockOrder.indexOf(id) !== i) ctx.addIssue({ code: 'custom', path: ['blockOrder', i], message: `"${id}" is listed twice` })
    })
    for (const id of ids)
      if (!document.blockOrder.includes(id)) ctx.addIssue({ code: 'custom', path: ['blockOrder'], message: `block "${id}" is missing from the block order` })
  })
export type SheetDocument = z.infer<typeof sheetDocumentSchema>
export type SheetDocumentInput = z.input<typeof sheetDocumentSchema>

/**
 * The loop file of a sheet, as the engine and "Download loop file" take it: parameters and blocks in print
 * order, each parameter's source as its `note`, the criteria in one fixed order (that of `criterionBounds`):
 * jsonb keeps no key order, so the order of the stored criteria object cannot be the print order, and the result
 * the server stores must come out the same as one computed again from the stored document.
 */
export function loopFileOf(document: SheetDocument): LoopFile {
  const { loop } = document
  const parameters: LoopFile['parameters'] = {}
  for (const { symbol, source } of document.parameters) {
    const parameter = loop.parameters[symbol]
    if (parameter) parameters[symbol] = source ? { ...parameter, note: source } : parameter
  }
  const blocks: LoopFile['blocks'] = {}
  for (const id of document.blockOrder) if (loop.blocks[id]) blocks[id] = loop.blocks[id]
  const criteria: LoopFile['criteria'] = {}
  const stated = loop.criteria ?? {}
  for (const name of Object.keys(criterionBounds) as CriterionName[]) if (stated[name]) criteria[name] = stated[name]
  return { ...loop, parameters, blocks, criteria }
}

/** A sheet document around an imported loop file: the file's order kept, each `note` taken as the source. */
export function documentOfLoopFile(loop: LoopFileInput): SheetDocumentInput {
  return {
    loop,
    parameters: Object.entries(loop.parameters ?? {}).map(([symbol, p]) => ({ symbol, description: '', source: p.note ?? '' })),
    blockOrder: Object.keys(loop.blocks ?? {}),
  }
}

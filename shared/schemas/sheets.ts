import { z } from 'zod'
import { listQuerySchema, type Page } from './lists'
import { sheetDocumentSchema, sheetStatuses, type SheetDocument, type SheetStatus } from './sheet'
import { idSchema, isStorableText, MAX_ID, plainText, storableTextMessage } from './text'
import type { FirmSettings } from './firm'
import type { LifecycleView } from './lifecycle'

/**
 * Bodies, queries and answers of the sheet and package routes (DEVELOPERS.md, "API"). The sheet document itself
 * is `sheetDocumentSchema` of ./sheet.ts.
 */

/** A query parameter holding a row id: a positive 32-bit integer. */
const idQuery = z.coerce
  .number({ invalid_type_error: 'Choose one' })
  .int('An id is a whole number')
  .positive('An id is positive')
  .max(MAX_ID, 'No such id')

/** Page numbers far past any real list would overflow the database's offset. */
const pageQuery = z.coerce.number().int().min(1).max(100_000).optional().default(1)

/**
 * Every text anywhere in a stored document, keys included, must be storable (PostgreSQL's jsonb refuses NUL, and a
 * lone surrogate cannot be written as UTF-8): the loop file's own free text (units, labels, notes) is checked
 * here too, so a bad character answers 400 at its path and never reaches the database.
 */
function checkStorable(value: unknown, path: Array<string | number>, ctx: z.RefinementCtx): void {
  if (typeof value === 'string') {
    if (!isStorableText(value)) ctx.addIssue({ code: 'custom', path, message: storableTextMessage })
  } else if (Array.isArray(value)) {
    value.forEach((item, i) => checkStorable(item, [...path, i], ctx))
  } else if (value !== null && typeof value === 'object') {
    for (const [key, item] of Object.entries(value)) {
      if (!isStorableText(key)) ctx.addIssue({ code: 'custom', path, message: storableTextMessage })
      else checkStorable(item, [...path, key], ctx)
    }
  }
}

/** The sheet document as a body holds it: the shared schema, and every text in it storable. */
export const storableSheetDocumentSchema = z
  .unknown()
  .superRefine((value, ctx) => checkStorable(value, [], ctx))
  .pipe(sheetDocumentSchema)

export const sheetTitleSchema = plainText(200, 1, 'Enter the sheet’s title')

/** A loop tag as instrument lists write it, e.g. `PIC-214-01`. */
export const loopTagSchema = plainText(40, 1, 'Enter the loop tag').pipe(
  z.string().regex(/^[A-Za-z0-9][A-Za-z0-9._/ -]*$/, 'Use letters, digits, spaces and . _ / - only'),
)

/** A template's name is its file name in sheets/ without `.json`. */
export const templateNameSchema = z.string({ invalid_type_error: 'Choose a template' }).regex(/^[a-z0-9][a-z0-9-]{0,80}$/, 'No such template')

export const sheetSortable = ['number', 'title', 'status', 'updatedAt'] as const
export type SheetSort = (typeof sheetSortable)[number]

/** GET /api/projects/[id]/sheets */
export const sheetsQuerySchema = listQuerySchema(sheetSortable).extend({
  q: plainText(200).optional().default(''),
  page: pageQuery,
  status: z.enum(sheetStatuses).optional(),
  packageId: idQuery.optional(),
})
export type SheetsQuery = z.output<typeof sheetsQuerySchema>

/** GET /api/sheets: the signed-in person's own sheets across projects; `mine=drafts` keeps draft and returned ones. */
export const mySheetsQuerySchema = listQuerySchema(sheetSortable).extend({
  q: plainText(200).optional().default(''),
  page: pageQuery,
  /** drafts: the ones still being written (draft, returned); ready: approved, waiting to be issued; all. */
  mine: z.enum(['drafts', 'ready', 'all']).optional().default('drafts'),
})
export type MySheetsQuery = z.output<typeof mySheetsQuerySchema>

/** POST /api/projects/[id]/sheets: blank, from a template (`template`), or a copy of a sheet (`copyOf`). */
export const newSheetSchema = z
  .object({
    title: sheetTitleSchema,
    loopTag: loopTagSchema,
    packageId: idSchema.nullable().optional(),
    template: templateNameSchema.optional(),
    copyOf: idSchema.optional(),
  })
  .strict()
  .refine((body) => !(body.template && body.copyOf), { message: 'Start from a template or from a copy, not both', path: ['copyOf'] })
export type NewSheetBody = z.infer<typeof newSheetSchema>

/** PATCH /api/sheets/[id]: a save of the current revision. `version` is the one the editor last loaded or saved. */
export const sheetSaveSchema = z
  .object({
    version: z.number({ required_error: 'The version is missing', invalid_type_error: 'The version is a number' }).int().min(1).max(MAX_ID),
    document: storableSheetDocumentSchema,
    title: sheetTitleSchema.optional(),
    loopTag: loopTagSchema.optional(),
  })
  .strict()
export type SheetSaveBody = z.infer<typeof sheetSaveSchema>

/** POST /api/projects/[id]/packages. Without `number` the server gives the next free `P01`, `P02`… */
export const packageSchema = z
  .object({
    number: plainText(40, 1, 'Enter the package number')
      .pipe(z.string().regex(/^[A-Za-z0-9][A-Za-z0-9._/-]*$/, 'Use letters, digits and . _ / - only'))
      .optional(),
    title: plainText(200, 1, 'Enter the package’s title'),
  })
  .strict()
export type PackageBody = z.infer<typeof packageSchema>

/** One row of a project's sheet list. `updatedAt` and `updatedByName` are the current revision's last edit. */
export interface SheetRow {
  id: number
  number: string
  title: string
  loopTag: string
  status: SheetStatus
  revisionIndex: number
  /** Null until the revision is issued. */
  revisionLabel: string | null
  packageId: number | null
  packageNumber: string | null
  updatedAt: string
  updatedByName: string
}

/** One row of GET /api/sheets (the home page's "Your sheets"). */
export interface MySheetRow extends SheetRow {
  projectId: number
  projectNumber: string
}

export type SheetPage = Page<SheetRow>
export type MySheetPage = Page<MySheetRow>

export interface PersonRef {
  id: number
  name: string
}

export interface SheetRevisionDetail {
  id: number
  index: number
  label: string | null
  status: SheetStatus
  /** Every save bumps it; a save must name the version it started from. */
  version: number
  document: SheetDocument
  /** The engine's result as the server computed it at the last save (calc-contract.md), or null when it refused. */
  result: unknown | null
  engineVersion: string
  preparedBy: PersonRef
  editedBy: PersonRef
  editedAt: string
  createdAt: string
}

/** GET /api/sheets/[id], and the answer of PATCH (and `data.current` of its 409). */
export interface SheetDetail {
  id: number
  projectId: number
  projectNumber: string
  projectName: string
  clientName: string
  number: string
  title: string
  loopTag: string
  packageId: number | null
  packageNumber: string | null
  packageTitle: string | null
  revision: SheetRevisionDetail
  firm: { name: string; paperSize: FirmSettings['paperSize']; defaultCautions: string[] }
  /** The viewer may save this revision (an engineer member, on a draft or returned revision). */
  canEdit: boolean
  /** The revision's life: what the viewer may do next (or why not), its signatures and whether they hold. */
  lifecycle: LifecycleView
}

/** POST /api/projects/[id]/sheets answers 201 with this. */
export interface CreatedSheet {
  id: number
  number: string
}

export interface PackageRow {
  id: number
  number: string
  title: string
  sheetCount: number
}

/**
 * A file of sheets/: a whole sheet to start from. The `document` is a sheet document (validated when the server
 * starts and in tests/server/templates.test.ts); `loopFileOf(document)` is what the engine reads.
 */
export const sheetTemplateSchema = z.object({
  title: sheetTitleSchema,
  loopTag: loopTagSchema,
  document: storableSheetDocumentSchema,
})
export type SheetTemplate = z.infer<typeof sheetTemplateSchema>

/** GET /api/templates: one row per file of sheets/. GET /api/templates/[name] answers the file (`SheetTemplate`). */
export interface TemplateSummary {
  name: string
  title: string
  loopTag: string
}

/** Statuses in which the current revision may be saved (product.md: a draft or a returned sheet). */
export const editableStatuses: readonly SheetStatus[] = ['draft', 'returned']
/** Statuses a client may see (product.md: only issued revisions; superseded ones they keep). */
export const clientVisibleStatuses: readonly SheetStatus[] = ['issued', 'superseded']

/**
 * One row of GET /api/check-queue: a revision in check in a project where the signed-in person is a checker member,
 * which they neither prepared nor edited (nobody checks their own work), the longest waiting first.
 */
export interface CheckQueueRow {
  sheetId: number
  revisionId: number
  revisionIndex: number
  number: string
  title: string
  loopTag: string
  projectId: number
  projectNumber: string
  preparedByName: string
  /** When it was submitted for check. */
  waitingSince: string
}

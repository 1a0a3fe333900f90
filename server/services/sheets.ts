// Calculation sheets and their revisions: the project's list, the engineer's own list, creation (blank, from a
// template, or a copy), the sheet with its current revision, and saves that recompute through the engine.
// Who may do what (product.md, "Who uses it"): admins and project members read; engineers who are members create
// and save drafts (and returned sheets); checkers read; clients see only issued revisions, never a draft.
import { and, asc, desc, eq, ilike, inArray, isNotNull, ne, or, sql, type SQL } from 'drizzle-orm'
import { alias } from 'drizzle-orm/pg-core'
import { createError } from 'h3'
import { organisations, packages, people, projectMembers, projects, revisionEditors, sheetRevisions, sheets } from '../db/schema'
import type { Database } from '../utils/db'
import type { Page } from '../../shared/schemas/lists'
import type { ProjectRole, Role } from '../../shared/schemas/roles'
import { loopFileOf, sheetDocumentSchema, type SheetDocument, type SheetDocumentInput, type SheetStatus } from '../../shared/schemas/sheet'
import {
  clientVisibleStatuses,
  editableStatuses,
  type CheckQueueRow,
  type CreatedSheet,
  type MySheetRow,
  type MySheetsQuery,
  type NewSheetBody,
  type SheetDetail,
  type SheetRow,
  type SheetSaveBody,
  type SheetsQuery,
  type SheetTemplate,
} from '../../shared/schemas/sheets'
import { ENGINE_VERSION } from '../../shared/calc/version'
import { recordAuditEvent, type AuditContext } from './audit-trail'
import { readFirmSettings } from './firm'
import { formatSheetNumber } from '../../shared/schemas/firm'
import { lifecycleView } from './lifecycle'

export interface Viewer {
  id: number
  roles: Role[]
}

/** A refusal the route records and answers (403): the service never writes the audit row of a refusal itself. */
export interface Refused {
  refused: string
  detail: Record<string, unknown>
}
export const refused = (reason: string, detail: Record<string, unknown>): Refused => ({ refused: reason, detail })
export const isRefused = (outcome: unknown): outcome is Refused =>
  typeof outcome === 'object' && outcome !== null && 'refused' in outcome && typeof (outcome as Refused).refused === 'string'

/** The engine's answer to a document, as a save stores it. */
export type Computation =
  | { ok: true; result: unknown }
  | { ok: false; kind: 'input' | 'timeout' | 'busy' | 'engine' | 'cancelled'; field?: string; message: string }
export type Compute = (loopFileText: string) => Promise<Computation>

/** Where templates come from (Nitro's server assets in the app; the files themselves in the seed and tests). */
export type ReadTemplate = (name: string) => Promise<SheetTemplate | null>

// ---------------------------------------------------------------------------------------------------------------
// Access

/** The roles `viewer` holds on project `projectId` (empty when not a member). */
async function memberRoles(db: Pick<Database, 'select'>, projectId: number, viewer: Viewer): Promise<ProjectRole[]> {
  const rows = await db
    .select({ role: projectMembers.role })
    .from(projectMembers)
    .where(and(eq(projectMembers.projectId, projectId), eq(projectMembers.personId, viewer.id)))
  return rows.map((row) => row.role as ProjectRole)
}

interface Access {
  /** May open the project's sheets at all. */
  read: boolean
  /** May see revisions that are not issued (drafts, sheets in check): everyone who reads except a client. */
  drafts: boolean
  /** May create sheets and save editable revisions: an engineer who is an engineer member. */
  write: boolean
}

function accessOf(viewer: Viewer, roles: ProjectRole[]): Access {
  const admin = viewer.roles.includes('admin')
  const staff = roles.some((role) => (role === 'engineer' || role === 'checker') && viewer.roles.includes(role))
  const clientMember = roles.includes('client') && viewer.roles.includes('client')
  return {
    read: admin || staff || clientMember,
    drafts: admin || staff,
    write: viewer.roles.includes('engineer') && roles.includes('engineer'),
  }
}

/** The sheet's newest issued (or superseded) revision: all a client sees of it. Null when it was never issued. */
export async function newestIssuedRevision(db: Pick<Database, 'select'>, sheetId: number) {
  const [row] = await db
    .select({ id: sheetRevisions.id, index: sheetRevisions.revisionIndex, status: sheetRevisions.status })
    .from(sheetRevisions)
    .where(and(eq(sheetRevisions.sheetId, sheetId), inArray(sheetRevisions.status, [...clientVisibleStatuses])))
    .orderBy(desc(sheetRevisions.revisionIndex))
    .limit(1)
  return row ? { ...row, status: row.status as SheetStatus } : null
}

export async function projectAccess(db: Pick<Database, 'select'>, projectId: number, viewer: Viewer): Promise<Access> {
  const [project] = await db.select({ id: projects.id }).from(projects).where(eq(projects.id, projectId))
  if (!project) throw createError({ statusCode: 404, statusMessage: 'No such project' })
  return accessOf(viewer, await memberRoles(db, projectId, viewer))
}

function badField(field: string, message: string): never {
  throw createError({
    statusCode: 400,
    statusMessage: 'Some fields need attention',
    data: { field, message, issues: { formErrors: [], fieldErrors: { [field]: [message] } } },
  })
}

// ---------------------------------------------------------------------------------------------------------------
// Lists

const current = alias(sheetRevisions, 'current')
const editor = alias(people, 'editor')

// Staff read the current revision's copy on `sheets` (sheets.current_*); a client the newest issued revision's
// (sheets.issued_*, null on a sheet never issued), so a sheet whose next revision is being written lists as last
// issued and nothing of the draft shows. Both copies are kept by triggers on sheet_revisions (schema.ts).
function rowColumnsFor(drafts: boolean) {
  return {
    id: sheets.id,
    number: sheets.number,
    title: sheets.title,
    loopTag: sheets.loopTag,
    status: drafts ? sheets.currentStatus : sql<string>`${sheets.issuedStatus}`,
    revisionIndex: drafts ? sheets.currentRevisionIndex : sql<number>`${sheets.issuedRevisionIndex}`,
    revisionLabel: drafts ? sheets.currentRevisionLabel : sheets.issuedRevisionLabel,
    packageId: sheets.packageId,
    packageNumber: packages.number,
    updatedAt: drafts ? sheets.currentEditedAt : sql<Date>`${sheets.issuedEditedAt}`.mapWith(sheets.issuedEditedAt),
    updatedByName: editor.name,
  }
}
type RowColumns = ReturnType<typeof rowColumnsFor>

type SelectedRow = Omit<SheetRow, 'status' | 'updatedAt'> & { status: string; updatedAt: Date }

function toRow<T extends SelectedRow>(row: T): Omit<T, 'status' | 'updatedAt'> & { status: SheetStatus; updatedAt: string } {
  return { ...row, status: row.status as SheetStatus, updatedAt: row.updatedAt.toISOString() }
}

/** `%q%` for ILIKE, with the pattern characters of `q` itself taken literally. */
function containing(q: string): string {
  return `%${q.replace(/[\\%_]/g, (character) => `\\${character}`)}%`
}

/**
 * Sheet numbers hold a sequence (`NWD-214-07`, `NWD-214-123`); ordered by length first, then text, they come in
 * sequence order without parsing the firm's pattern (indexed by sheets_project_number_order).
 */
function orderOf(query: Pick<SheetsQuery, 'sort' | 'dir'>, columns: Pick<RowColumns, 'status' | 'updatedAt'> = rowColumnsFor(true)): SQL[] {
  const direction = query.dir === 'desc' ? desc : asc
  const byNumber = [direction(sql`length(${sheets.number})`), direction(sheets.number)]
  switch (query.sort) {
    case 'title':
      return [direction(sheets.title), ...byNumber]
    case 'status':
      return [direction(columns.status), ...byNumber]
    case 'updatedAt':
      return [direction(columns.updatedAt), direction(sheets.id)]
    default:
      return byNumber
  }
}

function searchOf(q: string): SQL | undefined {
  if (!q) return undefined
  const pattern = containing(q)
  return or(ilike(sheets.number, pattern), ilike(sheets.title, pattern), ilike(sheets.loopTag, pattern))
}

/**
 * GET /api/projects/[id]/sheets: one page of the project's sheets. A client sees only sheets issued at least once,
 * each at its newest issued revision (status, label, last change), whatever revision is being written after it.
 */
export async function listProjectSheets(db: Database, projectId: number, query: SheetsQuery, viewer: Viewer): Promise<Page<SheetRow> | Refused> {
  const access = await projectAccess(db, projectId, viewer)
  if (!access.read) return refused('You are not a member of this project', { projectId })
  const columns = rowColumnsFor(access.drafts)
  const filters = [eq(sheets.projectId, projectId), searchOf(query.q)]
  if (query.status) filters.push(sql`${columns.status} = ${query.status}`)
  if (query.packageId) filters.push(eq(sheets.packageId, query.packageId))
  if (!access.drafts) filters.push(isNotNull(sheets.issuedRevisionIndex))
  const where = and(...filters)
  const [rows, [counted]] = await Promise.all([
    db
      .select(columns)
      .from(sheets)
      .innerJoin(editor, eq(editor.id, access.drafts ? sheets.currentEditedBy : sheets.issuedEditedBy))
      .leftJoin(packages, eq(packages.id, sheets.packageId))
      .where(where)
      .orderBy(...orderOf(query, columns))
      .limit(query.pageSize)
      .offset((query.page - 1) * query.pageSize),
    db.select({ total: sql<number>`count(*)::int` }).from(sheets).where(where),
  ])
  return { items: rows.map(toRow), total: counted?.total ?? 0, page: query.page, pageSize: query.pageSize }
}

/**
 * GET /api/sheets: the sheets whose current revision `viewer` prepared, across the projects they are still an
 * engineer member of; `mine=drafts` keeps the ones they can still edit (draft or returned), `mine=ready` the approved
 * ones waiting to be issued.
 */
export async function listMySheets(db: Database, query: MySheetsQuery, viewer: Viewer): Promise<Page<MySheetRow>> {
  const filters = [
    eq(sheets.currentPreparedBy, viewer.id),
    searchOf(query.q),
    sql`exists (select 1 from ${projectMembers} m where m.project_id = "sheets"."project_id" and m.person_id = ${viewer.id} and m.role = 'engineer')`,
  ]
  if (query.mine === 'drafts') filters.push(inArray(sheets.currentStatus, [...editableStatuses]))
  if (query.mine === 'ready') filters.push(eq(sheets.currentStatus, 'approved'))
  const where = and(...filters)
  const [rows, [counted]] = await Promise.all([
    db
      .select({ ...rowColumnsFor(true), projectId: projects.id, projectNumber: projects.number })
      .from(sheets)
      .innerJoin(editor, eq(editor.id, sheets.currentEditedBy))
      .innerJoin(projects, eq(projects.id, sheets.projectId))
      .leftJoin(packages, eq(packages.id, sheets.packageId))
      .where(where)
      // The engineer's home shows sheets returned to them first (issue 8, item 10): they wait on the engineer.
      .orderBy(...(query.mine === 'drafts' ? [desc(sql`${sheets.currentStatus} = 'returned'`)] : []), ...orderOf(query))
      .limit(query.pageSize)
      .offset((query.page - 1) * query.pageSize),
    db.select({ total: sql<number>`count(*)::int` }).from(sheets).where(where),
  ])
  return { items: rows.map(toRow), total: counted?.total ?? 0, page: query.page, pageSize: query.pageSize }
}

/**
 * GET /api/check-queue (issue 8, item 10): the revisions in check waiting for `viewer`, in the projects where they are
 * a checker member, the longest waiting since submission first. Never one they prepared or edited (product.md: the
 * checker is independent): its preparer and everyone in `revision_editors` (every save adds its editor) are left out.
 */
export async function listCheckQueue(db: Database, viewer: Viewer): Promise<CheckQueueRow[]> {
  if (!viewer.roles.includes('checker')) return []
  // A revision put in check other than by submitting it (by hand, or before submissions were timed) has no
  // submission time: its last change stands in.
  const waitingSince = sql<Date>`coalesce(${current.submittedAt}, ${current.editedAt})`.mapWith(current.editedAt)
  const rows = await db
    .select({
      sheetId: sheets.id,
      revisionId: current.id,
      revisionIndex: current.revisionIndex,
      number: sheets.number,
      title: sheets.title,
      loopTag: sheets.loopTag,
      projectId: projects.id,
      projectNumber: projects.number,
      preparedByName: preparer.name,
      waitingSince,
    })
    .from(sheets)
    .innerJoin(current, and(eq(current.sheetId, sheets.id), eq(current.revisionIndex, sheets.currentRevisionIndex)))
    .innerJoin(projects, eq(projects.id, sheets.projectId))
    .innerJoin(preparer, eq(preparer.id, current.preparedBy))
    .where(
      and(
        eq(sheets.currentStatus, 'in check'),
        sql`exists (select 1 from ${projectMembers} m where m.project_id = ${sheets.projectId} and m.person_id = ${viewer.id} and m.role = 'checker')`,
        ne(current.preparedBy, viewer.id),
        sql`not exists (select 1 from ${revisionEditors} e where e.revision_id = ${current.id} and e.person_id = ${viewer.id})`,
      ),
    )
    .orderBy(asc(waitingSince), asc(current.id))
    .limit(200)
  return rows.map((row) => ({ ...row, waitingSince: row.waitingSince.toISOString() }))
}

// ---------------------------------------------------------------------------------------------------------------
// One sheet

const preparer = alias(people, 'preparer')

/** The sheet with its current revision, or (`revisionId`) with that revision of it. */
async function loadSheet(db: Pick<Database, 'select'>, sheetId: number | null, revision: 'current' | { revisionId: number } = 'current') {
  const which = revision === 'current' ? eq(current.revisionIndex, sheets.currentRevisionIndex) : eq(current.id, revision.revisionId)
  const [row] = await db
    .select({
      id: sheets.id,
      projectId: projects.id,
      projectNumber: projects.number,
      projectName: projects.name,
      clientName: organisations.name,
      number: sheets.number,
      title: sheets.title,
      loopTag: sheets.loopTag,
      packageId: sheets.packageId,
      packageNumber: packages.number,
      packageTitle: packages.title,
      revision: {
        id: current.id,
        index: current.revisionIndex,
        label: current.label,
        status: current.status,
        version: current.version,
        document: current.document,
        result: current.result,
        engineVersion: current.engineVersion,
        preparedById: preparer.id,
        preparedByName: preparer.name,
        editedById: editor.id,
        editedByName: editor.name,
        editedAt: current.editedAt,
        createdAt: current.createdAt,
      },
    })
    .from(sheets)
    .innerJoin(projects, eq(projects.id, sheets.projectId))
    .innerJoin(organisations, eq(organisations.id, projects.organisationId))
    .innerJoin(current, and(eq(current.sheetId, sheets.id), which))
    .innerJoin(preparer, eq(preparer.id, current.preparedBy))
    .innerJoin(editor, eq(editor.id, current.editedBy))
    .leftJoin(packages, eq(packages.id, sheets.packageId))
    .where(sheetId === null ? undefined : eq(sheets.id, sheetId))
  return row ?? null
}
type LoadedSheet = NonNullable<Awaited<ReturnType<typeof loadSheet>>>

async function detailOf(db: Database, row: LoadedSheet, access: Access, viewer: Viewer): Promise<SheetDetail> {
  // The life of the revision shown; to a client, the newest issued revision is the sheet's current one.
  const [firm, lifecycle] = await Promise.all([
    readFirmSettings(db),
    lifecycleView(db, row.id, viewer, { revisionIndex: row.revision.index, issuedOnly: !access.drafts }),
  ])
  const { revision } = row
  const status = revision.status as SheetStatus
  return {
    ...row,
    revision: {
      id: revision.id,
      index: revision.index,
      label: revision.label,
      status,
      version: revision.version,
      document: revision.document as SheetDocument,
      result: revision.result ?? null,
      engineVersion: revision.engineVersion,
      preparedBy: { id: revision.preparedById, name: revision.preparedByName },
      editedBy: { id: revision.editedById, name: revision.editedByName },
      editedAt: revision.editedAt.toISOString(),
      createdAt: revision.createdAt.toISOString(),
    },
    firm: { name: firm.name, paperSize: firm.paperSize, defaultCautions: firm.defaultCautions },
    canEdit: access.write && editableStatuses.includes(status),
    lifecycle: lifecycle!,
  }
}

/**
 * The sheet and what `viewer` may do with it; `Refused` when they may not see it. Staff get the current revision; a
 * client the newest issued one, so a sheet whose next revision is being written still opens at the revision they
 * hold, and the draft stays out of the answer.
 */
async function sheetFor(db: Database, sheetId: number, viewer: Viewer) {
  const row = await loadSheet(db, sheetId)
  if (!row) throw createError({ statusCode: 404, statusMessage: 'No such sheet' })
  const access = accessOf(viewer, await memberRoles(db, row.projectId, viewer))
  if (!access.read) return refused('You are not a member of this sheet’s project', { sheetId })
  if (access.drafts) return { row, access }
  const issued = await newestIssuedRevision(db, sheetId)
  // The current status goes to the audit trail only (the answer is the reason alone).
  if (!issued) return refused('This sheet is not issued', { sheetId, status: row.revision.status })
  return { row: (await loadSheet(db, sheetId, { revisionId: issued.id }))!, access }
}

/**
 * One revision of a sheet, as the print view shows it, with no viewer: the PDF renderer's (a render token names
 * the revision, server/utils/render-token.ts). Null when there is no such revision.
 */
export async function revisionDetail(db: Database, revisionId: number): Promise<SheetDetail | null> {
  const row = await loadSheet(db, null, { revisionId })
  // Nobody acts through the renderer: a viewer of no roles, so every action reads as not allowed.
  return row ? detailOf(db, row, { read: true, drafts: true, write: false }, { id: 0, roles: [] }) : null
}

/**
 * Who may read revision `revisionId` and its PDF: as the sheet (a client only an issued or superseded revision, of
 * a project they are a client member of). Answers the detail, or `Refused`; 404 when there is no such revision.
 */
export async function viewRevision(db: Database, revisionId: number, viewer: Viewer): Promise<SheetDetail | Refused> {
  const row = await loadSheet(db, null, { revisionId })
  if (!row) throw createError({ statusCode: 404, statusMessage: 'No such revision' })
  const access = accessOf(viewer, await memberRoles(db, row.projectId, viewer))
  if (!access.read) return refused('You are not a member of this sheet’s project', { revisionId })
  const status = row.revision.status as SheetStatus
  if (!access.drafts && !clientVisibleStatuses.includes(status)) return refused('This revision is not issued', { revisionId, status })
  return detailOf(db, row, access, viewer)
}

/** GET /api/sheets/[id] */
export async function viewSheet(db: Database, sheetId: number, viewer: Viewer): Promise<SheetDetail | Refused> {
  const found = await sheetFor(db, sheetId, viewer)
  if (isRefused(found)) return found
  return detailOf(db, found.row, found.access, viewer)
}

// ---------------------------------------------------------------------------------------------------------------
// Computing and numbering

/** The engine's result for a document, or what stopped it. */
async function computeDocument(compute: Compute, document: SheetDocument): Promise<Computation> {
  return compute(JSON.stringify(loopFileOf(document)))
}

/** Answers the engine's refusal the way the calculate route does, with the field as the document names it. */
function answerRefusal(computation: Exclude<Computation, { ok: true }>): never {
  if (computation.kind === 'input') {
    const field = computation.field ? `loop.${computation.field}` : 'loop'
    throw createError({
      statusCode: 400,
      statusMessage: 'The engine cannot compute this loop',
      message: computation.message,
      data: { field, message: computation.message, issues: { formErrors: [], fieldErrors: { [field]: [computation.message] } } },
    })
  }
  if (computation.kind === 'timeout') {
    throw createError({ statusCode: 422, statusMessage: 'Computation stopped', message: computation.message, data: { message: computation.message } })
  }
  throw createError({ statusCode: 503, statusMessage: 'Busy', message: computation.message, data: { message: computation.message } })
}

/**
 * The next free sheet number of the project by the firm's pattern. The caller holds the project's row lock, so
 * two creations in one project take turns here; the loop steps past numbers already taken (a pattern changed
 * since, say).
 */
async function nextSheetNumber(db: Pick<Database, 'select'>, project: { id: number; number: string }, pattern: string): Promise<string> {
  const [counted] = await db.select({ n: sql<number>`count(*)::int` }).from(sheets).where(eq(sheets.projectId, project.id))
  for (let seq = (counted?.n ?? 0) + 1; ; seq++) {
    const number = formatSheetNumber(pattern, project.number, seq)
    const [taken] = await db
      .select({ id: sheets.id })
      .from(sheets)
      .where(and(eq(sheets.projectId, project.id), eq(sheets.number, number)))
    if (!taken) return number
  }
}

/** A blank sheet still holds one loop the engine can compute: a first-order plant under unity feedback. */
export function blankDocument(title: string): SheetDocumentInput {
  return {
    loop: {
      title,
      parameters: { K: { value: 1, unit: '' }, T: { value: 10, unit: 's', tex: 'T' } },
      blocks: { G: { role: 'plant', label: 'Process', num: 'K', den: 'T*s + 1' } },
      structure: { feedback: { forward: 'G', return: null, sign: -1 } },
    },
    parameters: [
      { symbol: 'K', description: 'Process gain', source: 'placeholder: replace with the process model' },
      { symbol: 'T', description: 'Process time constant', source: 'placeholder: replace with the process model' },
    ],
    blockOrder: ['G'],
  }
}

export interface CreateSources {
  compute: Compute
  readTemplate: ReadTemplate
}

/** POST /api/projects/[id]/sheets: a new sheet with its first revision (index 0, draft, version 1). */
export async function createSheet(
  db: Database,
  projectId: number,
  body: NewSheetBody,
  viewer: Viewer,
  context: AuditContext,
  sources: CreateSources,
): Promise<CreatedSheet | Refused> {
  const access = await projectAccess(db, projectId, viewer)
  if (!access.write) return refused('Only engineers of this project create its sheets', { projectId })
  if (body.packageId) {
    const [found] = await db
      .select({ id: packages.id })
      .from(packages)
      .where(and(eq(packages.id, body.packageId), eq(packages.projectId, projectId)))
    if (!found) badField('packageId', 'This project has no such package')
  }

  let source: SheetDocumentInput
  if (body.template) {
    const template = await sources.readTemplate(body.template)
    if (!template) badField('template', 'No such template')
    source = template.document
  } else if (body.copyOf) {
    const original = await loadSheet(db, body.copyOf)
    // The same answer whether the sheet does not exist or the engineer may not read it: nothing is given away.
    const readable = original && accessOf(viewer, await memberRoles(db, original.projectId, viewer)).drafts
    if (!original || !readable) badField('copyOf', 'No such sheet')
    source = original.revision.document as SheetDocument
  } else {
    source = blankDocument(body.title)
  }
  const document = sheetDocumentSchema.parse({ ...source, loop: { ...source.loop, title: body.title } })
  const computation = await computeDocument(sources.compute, document)
  if (!computation.ok && (computation.kind === 'busy' || computation.kind === 'timeout')) answerRefusal(computation)

  return db.transaction(async (tx) => {
    // The project's row lock makes concurrent creations in one project take turns for the next number.
    const [project] = await tx.select({ id: projects.id, number: projects.number }).from(projects).where(eq(projects.id, projectId)).for('update')
    const firm = await readFirmSettings(tx as unknown as Database)
    const number = await nextSheetNumber(tx, project!, firm.sheetNumbering)
    const [sheet] = await tx
      .insert(sheets)
      .values({
        projectId,
        packageId: body.packageId ?? null,
        number,
        title: body.title,
        loopTag: body.loopTag,
        createdBy: viewer.id,
        // The trigger on sheet_revisions copies the revision's own values in when it is inserted below.
        currentPreparedBy: viewer.id,
        currentEditedBy: viewer.id,
      })
      .returning({ id: sheets.id })
    const [revision] = await tx.insert(sheetRevisions).values({
      sheetId: sheet!.id,
      revisionIndex: 0,
      status: 'draft',
      document,
      version: 1,
      result: computation.ok ? computation.result : null,
      engineVersion: ENGINE_VERSION,
      preparedBy: viewer.id,
      editedBy: viewer.id,
    }).returning({ id: sheetRevisions.id })
    // Who made a revision may not check it (server/services/lifecycle.ts).
    await tx.insert(revisionEditors).values({ revisionId: revision!.id, personId: viewer.id })
    await recordAuditEvent(tx, context, {
      action: 'sheet.created',
      subjectType: 'sheet',
      subjectId: sheet!.id,
      detail: { projectId, number, template: body.template ?? null, copyOf: body.copyOf ?? null, packageId: body.packageId ?? null },
    })
    return { id: sheet!.id, number }
  })
}

/**
 * PATCH /api/sheets/[id]: saves the current revision and stores the engine's result for it. The version is
 * compared and bumped in one UPDATE, so of two saves from the same version exactly one wins; the other is
 * answered 409 with the sheet as stored.
 */
export async function saveSheet(
  db: Database,
  sheetId: number,
  body: SheetSaveBody,
  viewer: Viewer,
  context: AuditContext,
  compute: Compute,
): Promise<SheetDetail | Refused> {
  const found = await sheetFor(db, sheetId, viewer)
  if (isRefused(found)) return found
  const { row, access } = found
  const status = row.revision.status as SheetStatus
  if (!access.write) return refused('Only engineers of this project edit its sheets', { sheetId })
  if (!editableStatuses.includes(status)) return refused(`A sheet ${status} cannot be edited`, { sheetId, status })
  if (body.version !== row.revision.version) await conflict(db, sheetId, viewer, context, body.version)

  const computation = await computeDocument(compute, body.document)
  // An engine that fails on its own (not on the input) still lets the engineer's work be kept, without a result.
  if (!computation.ok && computation.kind !== 'engine') answerRefusal(computation)

  const saved = await db.transaction(async (tx) => {
    // The sheet's row lock first, then the revision's (the UPDATE): the order every transition takes them in
    // (server/services/lifecycle.ts), so a save racing a transition waits, never deadlocks.
    await tx.select({ id: sheets.id }).from(sheets).where(eq(sheets.id, sheetId)).for('update')
    const [updated] = await tx
      .update(sheetRevisions)
      .set({
        document: body.document,
        result: computation.ok ? computation.result : null,
        engineVersion: ENGINE_VERSION,
        version: sql`${sheetRevisions.version} + 1`,
        editedBy: viewer.id,
        editedAt: new Date(),
      })
      .where(
        and(
          eq(sheetRevisions.id, row.revision.id),
          eq(sheetRevisions.version, body.version),
          inArray(sheetRevisions.status, [...editableStatuses]),
        ),
      )
      .returning({ version: sheetRevisions.version })
    if (!updated) return null
    // Everyone who edited a revision, so none of them checks it.
    await tx.insert(revisionEditors).values({ revisionId: row.revision.id, personId: viewer.id }).onConflictDoNothing()
    if (body.title !== undefined || body.loopTag !== undefined) {
      await tx
        .update(sheets)
        .set({ ...(body.title !== undefined ? { title: body.title } : {}), ...(body.loopTag !== undefined ? { loopTag: body.loopTag } : {}) })
        .where(eq(sheets.id, sheetId))
    }
    await recordAuditEvent(tx, context, {
      action: 'sheet.saved',
      subjectType: 'sheet',
      subjectId: sheetId,
      detail: { revisionId: row.revision.id, version: updated.version, computed: computation.ok },
    })
    return updated
  })
  if (!saved) await conflict(db, sheetId, viewer, context, body.version)
  return detailOf(db, (await loadSheet(db, sheetId))!, access, viewer)
}

/** 409 with the sheet as stored, so the editor can set it beside the engineer's unsaved edits. */
async function conflict(db: Database, sheetId: number, viewer: Viewer, context: AuditContext, staleVersion: number): Promise<never> {
  const current = await viewSheet(db, sheetId, viewer)
  await recordAuditEvent(db, context, {
    action: 'sheet.save-refused',
    subjectType: 'sheet',
    subjectId: sheetId,
    status: 409,
    detail: { staleVersion, storedVersion: isRefused(current) ? null : current.revision.version },
  })
  throw createError({
    statusCode: 409,
    statusMessage: 'This sheet was saved since you loaded it',
    data: { current: isRefused(current) ? null : current },
  })
}

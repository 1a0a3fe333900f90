// A sheet's revision history (the one reader of it, the print view's too), the diff between two of its revisions, and the checker's recomputation of a revision
// with the engine as it is now (issue 8, items 5 and 6). Comments and drafts are never shown to clients.
import { and, asc, desc, eq, inArray, lte, sql } from 'drizzle-orm'
import { alias } from 'drizzle-orm/pg-core'
import { createError, isError } from 'h3'
import { comments, people, sheetRevisions, sheets, signatures } from '../db/schema'
import type { Database } from '../utils/db'
import type { Executor } from './audited'
import { contentHash } from '../utils/content-hash'
import type { CalcResult } from '../../shared/calc'
import { ENGINE_VERSION } from '../../shared/calc/version'
import { loopFileOf, type SheetDocument, type SheetStatus } from '../../shared/schemas/sheet'
import { clientVisibleStatuses } from '../../shared/schemas/sheets'
import type { IssuePurpose } from '../../shared/schemas/lifecycle'
import type { Recomputation, RevisionDiff, RevisionDiffQuery, RevisionHistory, RevisionSummary } from '../../shared/schemas/revisions'
import { diffDocuments, diffResults } from './revision-diff'
import { loadRevision, reviewRights } from './review-access'
import { refused, type Refused, type Viewer } from './sheets'

const preparer = alias(people, 'preparer')
const editor = alias(people, 'editor')
const issuer = alias(people, 'issuer')

async function sheetAndRights(db: Database, sheetId: number, viewer: Viewer) {
  const [sheet] = await db.select({ id: sheets.id, projectId: sheets.projectId, number: sheets.number, title: sheets.title }).from(sheets).where(eq(sheets.id, sheetId))
  if (!sheet) throw createError({ statusCode: 404, statusMessage: 'No such sheet' })
  const rights = await reviewRights(db, sheet.projectId, viewer)
  if (!rights.staff && !rights.client) return refused('You are not a member of this sheet’s project', { sheetId })
  return { sheet, rights }
}

/** One revision as the history, the diff and the print view read it: its summary, document and stored result. */
export interface RevisionRecord {
  summary: RevisionSummary
  document: SheetDocument
  result: CalcResult | null
}

/**
 * The one reader of a sheet's revisions (the history route, the diff and the print view's revision history):
 * newest first, each with its purpose of issue, its issuer and its signatures, each signature with whether the
 * stored document still hashes to it. `staff: false` (a client) reads the issued and superseded revisions only and
 * no comment counts; `indexes` picks revisions; `upTo` stops at a revision index (the print view of an earlier one).
 */
export async function readRevisions(
  db: Executor,
  sheetId: number,
  options: { staff: boolean; indexes?: number[]; upTo?: number },
): Promise<RevisionRecord[]> {
  const filters = [eq(sheetRevisions.sheetId, sheetId)]
  if (!options.staff) filters.push(inArray(sheetRevisions.status, [...clientVisibleStatuses]))
  if (options.indexes) filters.push(inArray(sheetRevisions.revisionIndex, options.indexes))
  if (options.upTo !== undefined) filters.push(lte(sheetRevisions.revisionIndex, options.upTo))
  const rows = await db
    .select({
      revision: sheetRevisions,
      preparedByName: preparer.name,
      editedByName: editor.name,
      issuedByName: issuer.name,
      comments: sql<number>`(select count(*)::int from ${comments} c where c.revision_id = ${sheetRevisions.id})`,
      openComments: sql<number>`(select count(*)::int from ${comments} c where c.revision_id = ${sheetRevisions.id} and c.resolved_at is null)`,
    })
    .from(sheetRevisions)
    .innerJoin(preparer, eq(preparer.id, sheetRevisions.preparedBy))
    .innerJoin(editor, eq(editor.id, sheetRevisions.editedBy))
    .leftJoin(issuer, eq(issuer.id, sheetRevisions.issuedBy))
    .where(and(...filters))
    .orderBy(desc(sheetRevisions.revisionIndex))
  const ids = rows.map((row) => row.revision.id)
  const signed = ids.length
    ? await db.select().from(signatures).where(inArray(signatures.revisionId, ids)).orderBy(asc(signatures.signedAt), asc(signatures.id))
    : []
  return rows.map(({ revision: r, preparedByName, editedByName, issuedByName, ...counts }) => {
    const hash = contentHash(r.document)
    return {
      summary: {
        id: r.id,
        index: r.revisionIndex,
        label: r.label,
        status: r.status as SheetStatus,
        version: r.version,
        preparedBy: { id: r.preparedBy, name: preparedByName },
        editedBy: { id: r.editedBy, name: editedByName },
        editedAt: r.editedAt.toISOString(),
        createdAt: r.createdAt.toISOString(),
        engineVersion: r.engineVersion,
        contentHash: hash,
        purpose: (r.purpose as IssuePurpose | null) ?? null,
        issuedAt: r.issuedAt?.toISOString() ?? null,
        issuedBy: r.issuedBy !== null && issuedByName !== null ? { id: r.issuedBy, name: issuedByName } : null,
        signatures: signed
          .filter((signature) => signature.revisionId === r.id)
          .map((signature) => ({
            name: signature.printedName,
            role: signature.role,
            meaning: signature.meaning,
            signedAt: signature.signedAt.toISOString(),
            contentHash: signature.contentHash,
            holds: signature.contentHash === hash,
          })),
        openComments: options.staff ? counts.openComments : null,
        comments: options.staff ? counts.comments : null,
      } satisfies RevisionSummary,
      document: r.document as SheetDocument,
      result: (r.result ?? null) as CalcResult | null,
    }
  })
}

/** GET /api/sheets/[id]/revisions */
export async function revisionHistory(db: Database, sheetId: number, viewer: Viewer): Promise<RevisionHistory | Refused> {
  const found = await sheetAndRights(db, sheetId, viewer)
  if ('refused' in found) return found
  const { sheet, rights } = found
  const revisions = (await readRevisions(db, sheetId, { staff: rights.staff })).map((row) => row.summary)
  if (!rights.staff && revisions.length === 0) return refused('This sheet is not issued', { sheetId })
  return { sheetId, number: sheet.number, title: sheet.title, revisions }
}

/** GET /api/sheets/[id]/diff?from=&to=: what changed from revision `from` to revision `to` (indexes). */
export async function revisionDiff(db: Database, sheetId: number, query: RevisionDiffQuery, viewer: Viewer): Promise<RevisionDiff | Refused> {
  const found = await sheetAndRights(db, sheetId, viewer)
  if ('refused' in found) return found
  const { rights } = found
  const all = await readRevisions(db, sheetId, { staff: true, indexes: [query.from, query.to] })
  const from = all.find((row) => row.summary.index === query.from)
  const to = all.find((row) => row.summary.index === query.to)
  if (!from || !to) throw createError({ statusCode: 404, statusMessage: `This sheet has no revision ${!from ? query.from : query.to}` })
  // A client compares issued revisions only: a draft's content is never shown to them.
  if (!rights.staff && ![from, to].every((row) => clientVisibleStatuses.includes(row.summary.status))) {
    return refused('Only issued revisions are shown to clients', { sheetId, from: query.from, to: query.to })
  }
  const documents = diffDocuments(from.document, to.document)
  const results = diffResults(from.result, to.result)
  const same =
    results.length === 0 &&
    documents.parameters.length + documents.blocks.length + documents.structure.length + documents.criteria.length + documents.text.length === 0 &&
    !documents.blockOrder
  const strip = (summary: RevisionSummary) => (rights.staff ? summary : { ...summary, openComments: null, comments: null })
  return { sheetId, from: strip(from.summary), to: strip(to.summary), ...documents, results, same }
}

export type RecomputeEngine = (loopFileText: string) => Promise<unknown>

/**
 * GET /api/revisions/[id]/recomputation: the revision's stored document computed again by the engine as it is now
 * (through the fair pool and the person's limits: `compute`), and what differs from the result stored at its last
 * save. Staff of the project may ask (a checker above all); a client never.
 */
export async function recomputeRevision(db: Database, revisionId: number, viewer: Viewer, compute: RecomputeEngine): Promise<Recomputation | Refused> {
  const revision = await loadRevision(db, revisionId)
  const rights = await reviewRights(db, revision.projectId, viewer)
  if (!rights.staff) return refused(rights.client ? 'The recomputation is for the firm’s checkers' : 'You are not a member of this sheet’s project', { revisionId })
  const [savedBy] = await db.select({ id: people.id, name: people.name }).from(people).where(eq(people.id, revision.editedBy))
  let now: CalcResult | null = null
  let refusal: string | null = null
  try {
    now = (await compute(JSON.stringify(loopFileOf(revision.document as SheetDocument)))) as CalcResult
  } catch (error) {
    // The engine refusing a stored document (400) or failing on it (500) is the finding itself; the time limit
    // (422), the person's limits (429) and a full pool (503) are answered as they are.
    if (isError(error) && (error.statusCode === 400 || error.statusCode === 500)) refusal = error.message
    else throw error
  }
  const stored = (revision.result ?? null) as CalcResult | null
  const differences = refusal
    ? [{ kind: 'result' as const, quantity: 'result', label: 'Result', before: stored ? 'computed' : 'none', after: `refused: ${refusal}` }]
    : diffResults(stored, now)
  return {
    revisionId,
    status: revision.status,
    version: revision.version,
    stored: { engineVersion: revision.engineVersion, savedAt: revision.editedAt.toISOString(), savedBy: savedBy!, present: stored !== null },
    now: { engineVersion: ENGINE_VERSION, computedAt: new Date().toISOString() },
    refusal,
    differences,
    agrees: differences.length === 0,
  }
}

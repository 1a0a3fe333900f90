// Attachments of a sheet revision (issue 10, item 1): datasheets, drawings, photographs and data files. The record
// is a row of `attachments`; the bytes are an object in S3-compatible storage (server/services/object-store.ts).
// Who may do what is the sheet's rule (server/services/sheets.ts): admins and members read, a client only an issued
// or superseded revision's; engineer members upload to and delete from the current revision while it is a draft
// (or returned). An issued revision's attachments are frozen with it by the database (drizzle/0013).
import { randomUUID } from 'node:crypto'
import { and, asc, eq } from 'drizzle-orm'
import { createError } from 'h3'
import { fileTypeFromBuffer } from 'file-type'
import Papa from 'papaparse'
import { attachments, people, sheetRevisions, sheets } from '../db/schema'
import type { Database } from '../utils/db'
import { useObjectStore } from '../utils/object-store'
import { sha256Hex } from '../utils/content-hash'
import {
  attachmentNameProblem,
  attachmentTypeNames,
  extensionTypes,
  formatFileSize,
  MAX_ATTACHMENT_BYTES,
  type AttachmentType,
  type AttachmentView,
  type SheetAttachments,
  type UploadedAttachment,
} from '../../shared/schemas/attachments'
import { clientVisibleStatuses, editableStatuses } from '../../shared/schemas/sheets'
import type { SheetStatus } from '../../shared/schemas/sheet'
import { audited } from './audited'
import type { AuditContext } from './audit-trail'
import type { ObjectStore } from './object-store'
import { isRefused, newestIssuedRevision, projectAccess, refused, type Refused, type Viewer } from './sheets'

/** A file as the upload route received it. */
export interface IncomingFile {
  name: string
  bytes: Buffer
}

/** An attachment with its bytes, for whoever may see it (the step-test fit reads its CSV through this). */
export interface AttachmentContent {
  id: number
  revisionId: number
  sheetId: number
  name: string
  size: number
  sha256: string
  type: AttachmentType
  bytes: Buffer
}

// ---------------------------------------------------------------------------------------------------------------
// What a file is

/** A refusal of the file itself: 4xx naming the field `file`, with the message the upload screen shows. */
function fileRefused(statusCode: 400 | 413 | 415, message: string): never {
  throw createError({ statusCode, statusMessage: 'The file was not taken', message, data: { field: 'file', message } })
}

/** UTF-8 text without NUL, or null: the test of a CSV or plain-text file. */
function textOf(bytes: Buffer): string | null {
  try {
    const text = new TextDecoder('utf-8', { fatal: true }).decode(bytes)
    return text.includes('\u0000') ? null : text
  } catch {
    return null
  }
}

/**
 * Delimited rows: papaparse (npm) guesses the delimiter, and the text is CSV when it parses without error into at
 * least two rows of the same number (two or more) of fields. Anything else that is text is plain text.
 */
function isDelimitedRows(text: string): boolean {
  const parsed = Papa.parse<string[]>(text, { skipEmptyLines: true })
  if (parsed.errors.length > 0 || parsed.data.length < 2) return false
  const width = parsed.data[0]!.length
  return width >= 2 && parsed.data.every((row) => row.length === width)
}

/** The type of a file found from its content: PDF, PNG and JPEG by their signatures (file-type, npm), else text. */
export async function typeOfContent(bytes: Buffer): Promise<AttachmentType | null> {
  const sniffed = await fileTypeFromBuffer(bytes)
  if (sniffed) {
    const known: Record<string, AttachmentType> = { 'application/pdf': 'application/pdf', 'image/png': 'image/png', 'image/jpeg': 'image/jpeg' }
    return known[sniffed.mime] ?? null
  }
  const text = textOf(bytes)
  if (text === null) return null
  return isDelimitedRows(text) ? 'text/csv' : 'text/plain'
}

/** The file's type, or a refusal with a message that says what was wrong (no record and no object is made). */
export async function checkFile(file: IncomingFile): Promise<AttachmentType> {
  const nameProblem = attachmentNameProblem(file.name)
  if (nameProblem) fileRefused(400, nameProblem)
  if (file.bytes.length === 0) fileRefused(400, `${file.name} is empty: choose a file with something in it`)
  if (file.bytes.length > MAX_ATTACHMENT_BYTES) {
    fileRefused(413, `${file.name} is ${formatFileSize(file.bytes.length)} (${file.bytes.length.toLocaleString('en')} bytes): a file may be at most ${formatFileSize(MAX_ATTACHMENT_BYTES)} (${MAX_ATTACHMENT_BYTES.toLocaleString('en')} bytes)`)
  }
  const type = await typeOfContent(file.bytes)
  if (!type) fileRefused(415, `${file.name} is not a PDF, PNG, JPEG, CSV or plain-text file by its content`)
  const extension = /\.([^.]+)$/.exec(file.name)?.[1]?.toLowerCase()
  const claimed = extension ? extensionTypes[extension] : undefined
  if (claimed && !claimed.includes(type)) {
    fileRefused(415, `${file.name} is named like ${attachmentTypeNames[claimed[0]!]} but its content is ${attachmentTypeNames[type]}: rename it or choose the right file`)
  }
  return type
}

// ---------------------------------------------------------------------------------------------------------------
// Reading

const attachmentColumns = {
  id: attachments.id,
  revisionId: attachments.revisionId,
  name: attachments.name,
  size: attachments.size,
  sha256: attachments.sha256,
  type: attachments.type,
  objectKey: attachments.objectKey,
  uploadedAt: attachments.uploadedAt,
  uploadedById: people.id,
  uploadedByName: people.name,
}
type AttachmentRow = { id: number; revisionId: number; name: string; size: number; sha256: string; type: string; uploadedAt: Date; uploadedById: number; uploadedByName: string }

function viewOf(row: AttachmentRow): AttachmentView {
  return {
    id: row.id,
    revisionId: row.revisionId,
    name: row.name,
    size: row.size,
    sha256: row.sha256,
    type: row.type as AttachmentType,
    uploadedBy: { id: row.uploadedById, name: row.uploadedByName },
    uploadedAt: row.uploadedAt.toISOString(),
    url: `/api/attachments/${row.id}`,
  }
}

/** The attachments of one revision, oldest first, with no viewer: the print view's (a render token names the revision). */
export async function revisionAttachments(db: Database, revisionId: number): Promise<AttachmentView[]> {
  const rows = await db
    .select(attachmentColumns)
    .from(attachments)
    .innerJoin(people, eq(people.id, attachments.uploadedBy))
    .where(eq(attachments.revisionId, revisionId))
    .orderBy(asc(attachments.uploadedAt), asc(attachments.id))
  return rows.map(viewOf)
}

/**
 * The sheet's revision `viewer` works on or reads, and what they may do with it: the current one for staff, the
 * newest issued one for a client (while the next revision is written they keep seeing what was issued); Refused
 * when they may not see the sheet.
 */
async function shownRevisionFor(db: Database, sheetId: number, viewer: Viewer) {
  const [row] = await db
    .select({ projectId: sheets.projectId, revisionId: sheetRevisions.id, status: sheetRevisions.status })
    .from(sheets)
    .innerJoin(sheetRevisions, and(eq(sheetRevisions.sheetId, sheets.id), eq(sheetRevisions.revisionIndex, sheets.currentRevisionIndex)))
    .where(eq(sheets.id, sheetId))
  if (!row) throw createError({ statusCode: 404, statusMessage: 'No such sheet' })
  const access = await projectAccess(db, row.projectId, viewer)
  if (!access.read) return refused('You are not a member of this sheet’s project', { sheetId })
  const status = row.status as SheetStatus
  if (access.drafts) return { ...row, status, access, editable: access.write && editableStatuses.includes(status) }
  const issued = await newestIssuedRevision(db, sheetId)
  if (!issued) return refused('This sheet is not issued', { sheetId, status })
  return { projectId: row.projectId, revisionId: issued.id, status: issued.status, access, editable: false }
}

/** GET /api/sheets/[id]/attachments: the attachments of the revision shown (shownRevisionFor). */
export async function listSheetAttachments(db: Database, sheetId: number, viewer: Viewer): Promise<SheetAttachments | Refused> {
  const found = await shownRevisionFor(db, sheetId, viewer)
  if (isRefused(found)) return found
  return { revisionId: found.revisionId, attachments: await revisionAttachments(db, found.revisionId), canUpload: found.editable, canDelete: found.editable }
}

/** One attachment with its revision's place and the viewer's access; Refused when they may not see it, null when none. */
async function attachmentFor(db: Database, attachmentId: number, viewer: Viewer) {
  const [row] = await db
    .select({ ...attachmentColumns, sheetId: sheets.id, projectId: sheets.projectId, status: sheetRevisions.status, currentIndex: sheets.currentRevisionIndex, revisionIndex: sheetRevisions.revisionIndex })
    .from(attachments)
    .innerJoin(people, eq(people.id, attachments.uploadedBy))
    .innerJoin(sheetRevisions, eq(sheetRevisions.id, attachments.revisionId))
    .innerJoin(sheets, eq(sheets.id, sheetRevisions.sheetId))
    .where(eq(attachments.id, attachmentId))
  if (!row) return null
  const access = await projectAccess(db, row.projectId, viewer)
  if (!access.read) return refused('You are not a member of this sheet’s project', { attachmentId, sheetId: row.sheetId })
  const status = row.status as SheetStatus
  if (!access.drafts && !clientVisibleStatuses.includes(status)) return refused('This attachment’s revision is not issued', { attachmentId, sheetId: row.sheetId, status })
  return { row, status, access }
}

async function contentOf(row: AttachmentRow & { objectKey: string; sheetId: number }, store: ObjectStore): Promise<AttachmentContent> {
  const bytes = await store.get(row.objectKey).catch(() => {
    throw createError({ statusCode: 503, statusMessage: 'The file store does not answer now' })
  })
  if (!bytes) throw createError({ statusCode: 503, statusMessage: 'The stored file is missing' })
  return { id: row.id, revisionId: row.revisionId, sheetId: row.sheetId, name: row.name, size: row.size, sha256: row.sha256, type: row.type as AttachmentType, bytes }
}

/**
 * An attachment with its bytes, under the sheet's permissions: null when there is no such attachment or `viewer` may
 * not see it (a non-member; a client, before its revision is issued).
 */
export async function readAttachment(db: Database, attachmentId: number, viewer: Viewer, store: ObjectStore = useObjectStore()): Promise<AttachmentContent | null> {
  const found = await attachmentFor(db, attachmentId, viewer)
  if (!found || isRefused(found)) return null
  return contentOf(found.row, store)
}

/** GET /api/attachments/[id]: as readAttachment, but a refusal is answered as such (the route audits it); 404 when none. */
export async function downloadAttachment(db: Database, attachmentId: number, viewer: Viewer, store: ObjectStore = useObjectStore()): Promise<AttachmentContent | Refused> {
  const found = await attachmentFor(db, attachmentId, viewer)
  if (!found) throw createError({ statusCode: 404, statusMessage: 'No such attachment' })
  if (isRefused(found)) return found
  return contentOf(found.row, store)
}

// ---------------------------------------------------------------------------------------------------------------
// Writing

/** 409: the revision takes no attachment changes (it is in check, approved, issued or no longer current). */
function notEditable(status: string): never {
  const message = ['issued', 'superseded'].includes(status)
    ? `An ${status} revision’s attachments are frozen with it: revise the sheet to attach or remove files`
    : `A sheet ${status} takes no attachment changes: only a draft or a returned sheet does`
  throw createError({ statusCode: 409, statusMessage: 'The revision is not a draft', message, data: { status, message } })
}

/**
 * POST /api/sheets/[id]/attachments: checks the file (type from the content, size, name), stores the object, then
 * inserts the row in an audited transaction under the sheet's row lock (the order saves and transitions take it);
 * when the insert fails the object is deleted again, so a refusal or a failure leaves neither record nor object.
 */
export async function uploadAttachment(
  db: Database,
  sheetId: number,
  file: IncomingFile,
  viewer: Viewer,
  context: AuditContext,
  store: ObjectStore = useObjectStore(),
): Promise<UploadedAttachment | Refused> {
  const found = await shownRevisionFor(db, sheetId, viewer)
  if (isRefused(found)) return found
  if (!found.access.write) return refused('Only engineers of this project attach files to its sheets', { sheetId })
  if (!found.editable) notEditable(found.status)

  const type = await checkFile(file)
  const sha256 = sha256Hex(file.bytes)
  const objectKey = `sheets/${sheetId}/revisions/${found.revisionId}/${randomUUID()}`
  try {
    await store.put(objectKey, file.bytes, type)
  } catch {
    // A put that failed part-way may have left something: removed if it can be (S3 ignores a missing key).
    await store.remove(objectKey).catch(() => undefined)
    throw createError({ statusCode: 503, statusMessage: 'The file store does not answer now', message: `${file.name} could not be stored now; nothing was kept. Try again later.` })
  }
  try {
    return await audited(
      db,
      context,
      (made: UploadedAttachment) => ({
        action: 'attachment.uploaded',
        subjectType: 'attachment',
        subjectId: made.id,
        detail: { sheetId, revisionId: found.revisionId, name: made.name, size: made.size, sha256: made.sha256, type: made.type },
      }),
      async (tx) => {
        await tx.select({ id: sheets.id }).from(sheets).where(eq(sheets.id, sheetId)).for('update')
        // Read again under the lock: a submit or issue that came first wins.
        const [revision] = await tx
          .select({ status: sheetRevisions.status })
          .from(sheetRevisions)
          .innerJoin(sheets, and(eq(sheets.id, sheetRevisions.sheetId), eq(sheets.currentRevisionIndex, sheetRevisions.revisionIndex)))
          .where(eq(sheetRevisions.id, found.revisionId))
        if (!revision || !editableStatuses.includes(revision.status as SheetStatus)) notEditable(revision?.status ?? 'superseded')
        const [row] = await tx
          .insert(attachments)
          .values({ revisionId: found.revisionId, name: file.name, size: file.bytes.length, sha256, type, objectKey, uploadedBy: viewer.id })
          .returning({ id: attachments.id, name: attachments.name, size: attachments.size, sha256: attachments.sha256, type: attachments.type })
        return { ...row!, type: row!.type as AttachmentType }
      },
    )
  } catch (error) {
    await store.remove(objectKey).catch(() => undefined)
    throw error
  }
}

/**
 * DELETE /api/attachments/[id]: an engineer member removes an attachment of the current revision while it is a draft
 * (or returned); 409 otherwise (an issued revision's are frozen). The row goes in an audited transaction, then the
 * object; an object left behind by a store that failed then is unreachable and harmless.
 */
export async function deleteAttachment(db: Database, attachmentId: number, viewer: Viewer, context: AuditContext, store: ObjectStore = useObjectStore()): Promise<{ id: number } | Refused> {
  const found = await attachmentFor(db, attachmentId, viewer)
  if (!found) throw createError({ statusCode: 404, statusMessage: 'No such attachment' })
  if (isRefused(found)) return found
  const { row } = found
  if (!found.access.write) return refused('Only engineers of this project remove files from its sheets', { attachmentId, sheetId: row.sheetId })
  if (row.revisionIndex !== row.currentIndex || !editableStatuses.includes(found.status)) notEditable(found.status)
  await audited(
    db,
    context,
    { action: 'attachment.deleted', subjectType: 'attachment', subjectId: attachmentId, detail: { sheetId: row.sheetId, revisionId: row.revisionId, name: row.name, sha256: row.sha256 } },
    async (tx) => {
      await tx.select({ id: sheets.id }).from(sheets).where(eq(sheets.id, row.sheetId)).for('update')
      const [revision] = await tx.select({ status: sheetRevisions.status }).from(sheetRevisions).where(eq(sheetRevisions.id, row.revisionId))
      if (!revision || !editableStatuses.includes(revision.status as SheetStatus)) notEditable(revision?.status ?? 'superseded')
      await tx.delete(attachments).where(eq(attachments.id, attachmentId))
    },
  )
  // A revision started from another carries its files under the same keys: the object goes with its last row.
  const [stillNamed] = await db.select({ id: attachments.id }).from(attachments).where(eq(attachments.objectKey, row.objectKey)).limit(1)
  if (!stillNamed) await store.remove(row.objectKey).catch(() => undefined)
  return { id: attachmentId }
}

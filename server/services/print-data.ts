// What the print view shows when the PDF renderer opens it: one revision of a sheet (any revision, not only the
// current one), every revision before it, its signatures, and on an issued revision the issue's words and the
// short content hash the last page states. Reached only with a render token (server/utils/render-token.ts).
import { and, asc, eq, lte } from 'drizzle-orm'
import { people, sheetRevisions, signatures } from '../db/schema'
import type { Database } from '../utils/db'
import type { PrintIssue, PrintSheet } from '../../shared/schemas/print'
import type { SheetStatus } from '../../shared/schemas/sheet'
import { revisionDetail } from './sheets'
import { contentHash } from '../utils/content-hash'
import { revisionAttachments } from './attachments'

export async function printSheet(db: Database, revisionId: number, issue: PrintIssue | null, siteUrl: string): Promise<PrintSheet | null> {
  const detail = await revisionDetail(db, revisionId)
  if (!detail) return null
  const history = await db
    .select({
      index: sheetRevisions.revisionIndex,
      label: sheetRevisions.label,
      status: sheetRevisions.status,
      createdAt: sheetRevisions.createdAt,
      preparedBy: people.name,
    })
    .from(sheetRevisions)
    .innerJoin(people, eq(people.id, sheetRevisions.preparedBy))
    .where(and(eq(sheetRevisions.sheetId, detail.id), lte(sheetRevisions.revisionIndex, detail.revision.index)))
    .orderBy(asc(sheetRevisions.revisionIndex))
  const signed = await db.select().from(signatures).where(eq(signatures.revisionId, revisionId)).orderBy(asc(signatures.signedAt), asc(signatures.id))
  const hash = contentHash(detail.revision.document)
  const issued = ['issued', 'superseded'].includes(detail.revision.status)
  const label = issue?.label ?? detail.revision.label
  const verifyUrl = `${siteUrl.replace(/\/+$/, '')}/verify`
  return {
    ...detail,
    // During an issue the revision row still says approved: the PDF is made as the issued revision will read.
    revision: issue ? { ...detail.revision, label: issue.label, status: 'issued' } : detail.revision,
    history: history.map((row) => ({
      ...row,
      ...(issue && row.index === detail.revision.index ? { label: issue.label, status: 'issued' as const } : { status: row.status as SheetStatus }),
      createdAt: row.createdAt.toISOString(),
    })),
    // The signatures of this revision (server/services/lifecycle.ts); each holds while the document hashes to it.
    signatures: signed.map((row) => ({ name: row.printedName, role: row.role, meaning: row.meaning, signedAt: row.signedAt.toISOString(), holds: row.contentHash === hash })),
    issue: issue || (issued && label) ? { ...(issue ?? {}), label: label!, contentHash: hash, verifyUrl } : null,
    attachments: await revisionAttachments(db, revisionId),
  }
}

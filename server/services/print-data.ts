// What the print view shows when the PDF renderer opens it: one revision of a sheet (any revision, not only the
// current one), every revision before it, its signatures, and on an issued revision the issue's words and the
// short content hash the last page states. Reached only with a render token (server/utils/render-token.ts).
// The revisions and signatures come from the history's own reader (readRevisions of ./revisions).
import type { Database } from '../utils/db'
import type { PrintIssue, PrintSheet } from '../../shared/schemas/print'
import { revisionDetail } from './sheets'
import { revisionAttachments } from './attachments'
import { readRevisions } from './revisions'

export async function printSheet(db: Database, revisionId: number, issue: PrintIssue | null, siteUrl: string): Promise<PrintSheet | null> {
  const detail = await revisionDetail(db, revisionId)
  if (!detail) return null
  const records = await readRevisions(db, detail.id, { staff: true, upTo: detail.revision.index })
  const own = records.find((record) => record.summary.id === revisionId)!.summary
  const issued = ['issued', 'superseded'].includes(detail.revision.status)
  const label = issue?.label ?? detail.revision.label
  const verifyUrl = `${siteUrl.replace(/\/+$/, '')}/verify`
  return {
    ...detail,
    // During an issue the revision row still says approved: the PDF is made as the issued revision will read.
    revision: issue ? { ...detail.revision, label: issue.label, status: 'issued' } : detail.revision,
    history: records
      .map(({ summary: row }) => ({
        index: row.index,
        label: row.label,
        status: row.status,
        purpose: row.purpose,
        createdAt: row.createdAt,
        preparedBy: row.preparedBy.name,
        editedBy: row.editedBy.name,
        editedAt: row.editedAt,
        ...(issue && row.index === detail.revision.index ? { label: issue.label, status: 'issued' as const, purpose: issue.purpose as PrintSheet['history'][number]['purpose'] } : {}),
      }))
      .reverse(),
    // The signatures of this revision (server/services/lifecycle.ts); each holds while the document hashes to it.
    signatures: own.signatures,
    issue: issue || (issued && label) ? { ...(issue ?? {}), label: label!, contentHash: own.contentHash, verifyUrl } : null,
    attachments: await revisionAttachments(db, revisionId),
  }
}

// The print view's data when the PDF renderer opens it (GET /api/print/[token]), and the rule that names a PDF.
import type { AttachmentView } from './attachments'
import { z } from 'zod'
import type { SheetStatus } from './sheet'
import type { SheetDetail } from './sheets'
import type { IssuePurpose } from './lifecycle'
import type { RevisionSignature } from './revisions'
import { plainText } from './text'

/** GET /api/print/[token]: the render token of server/utils/render-token.ts. */
export const printDataQuerySchema = z.object({ token: plainText(4000, 1, 'A render token is needed') })

/** The issue a render is made for: given by the issue step before the revision row says issued. */
export interface PrintIssue {
  label: string
  purpose: string
  issuedBy: string
  /** ISO 8601, UTC. */
  issuedAt: string
}

/** A signature as the PDF prints it: the history's own (who, role, meaning, UTC time, hash, whether it holds). */
export type PrintSignature = RevisionSignature

export interface PrintHistoryRow {
  index: number
  label: string | null
  status: SheetStatus
  purpose: IssuePurpose | null
  createdAt: string
  preparedBy: string
  editedBy: string
  editedAt: string
}

export interface PrintSheet extends SheetDetail {
  /** Every revision of the sheet up to this one, oldest first. */
  history: PrintHistoryRow[]
  signatures: PrintSignature[]
  /** Set on an issued (or being issued, or superseded) revision: what the issued PDF's last page states. */
  issue: (Partial<PrintIssue> & { label: string; contentHash: string; verifyUrl: string }) | null
  /** The files attached to this revision (server/services/attachments.ts), in the references list. */
  attachments: AttachmentView[]
}

/** `[A-Za-z0-9._-]` only, so the name is the same on every file system and in every header. */
const fileSafe = (text: string) => text.replace(/[^A-Za-z0-9._-]+/g, '-').replace(/^-+|-+$/g, '')

/**
 * The firm's rule for PDF names: `NWD-214-03_rev-A.pdf` for an issued revision (sheet number, revision label);
 * `NWD-214-03_rev-0-draft_preview.pdf` for one not issued, so a preview is never mistaken for an issue.
 */
export function sheetPdfFileName(sheetNumber: string, revision: { index: number; label: string | null; status: SheetStatus }): string {
  if (revision.label) return `${fileSafe(sheetNumber)}_rev-${fileSafe(revision.label)}.pdf`
  return `${fileSafe(sheetNumber)}_rev-${revision.index}-${fileSafe(revision.status)}_preview.pdf`
}

/** `NWD-214_P01_rev-A.pdf`: project number, package number, the revision label of the issue. */
export function packagePdfFileName(projectNumber: string, packageNumber: string, label: string | null): string {
  return `${fileSafe(projectNumber)}_${fileSafe(packageNumber)}${label ? `_rev-${fileSafe(label)}` : '_preview'}.pdf`
}

/** One sheet in a package's index: where it starts and ends in the package PDF (pages counted from the cover's first). */
export interface PrintCoverEntry {
  number: string
  title: string
  loopTag: string
  /** The revision label the sheet carries in this package (new with it, or already issued). */
  label: string
  /** True when the sheet is issued with this package; false when it is carried at an earlier issue. */
  newInPackage: boolean
  firstPage: number
  lastPage: number
}

/** The cover sheet (transmittal) of a package, as the package print view (/packages/[id]/print) draws it. */
export interface PrintCover {
  firm: { name: string; paperSize: 'A4' | 'Letter' | 'A3' }
  projectNumber: string
  projectName: string
  clientName: string
  packageNumber: string
  packageTitle: string
  /** The package's revision label of this issue. */
  label: string
  purpose: string
  issuedBy: string
  /** ISO 8601, UTC. */
  issuedAt: string
  recipients: Array<{ name: string; email: string }>
  index: PrintCoverEntry[]
  /** Pages of the cover itself, and of the whole package. */
  coverPages: number
  totalPages: number
}

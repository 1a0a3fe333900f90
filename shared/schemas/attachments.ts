// Attachments of a sheet revision (issue 10, item 1): what the routes answer and the rules a file must meet, shared by
// the upload screen (which refuses early what the server would refuse) and the server (which decides).
import { isStorableText } from './text'

/** The largest file taken: 25 MiB. */
export const MAX_ATTACHMENT_BYTES = 25 * 1024 * 1024
/** The longest file name taken, in characters. */
export const MAX_ATTACHMENT_NAME = 200

/** What a file may be, found from its content (never its name). */
export const attachmentTypes = ['application/pdf', 'image/png', 'image/jpeg', 'text/csv', 'text/plain'] as const
export type AttachmentType = (typeof attachmentTypes)[number]

/** How each type is named to a person. */
export const attachmentTypeNames: Record<AttachmentType, string> = {
  'application/pdf': 'a PDF',
  'image/png': 'a PNG image',
  'image/jpeg': 'a JPEG image',
  'text/csv': 'CSV data',
  'text/plain': 'plain text',
}

/** The types a name's extension claims: a file whose content is another type has a misleading name. */
export const extensionTypes: Record<string, readonly AttachmentType[]> = {
  pdf: ['application/pdf'],
  png: ['image/png'],
  jpg: ['image/jpeg'],
  jpeg: ['image/jpeg'],
  csv: ['text/csv'],
  txt: ['text/plain', 'text/csv'],
  text: ['text/plain', 'text/csv'],
}

/**
 * Why a file name is refused, or null when it is fine: a name is stored and sent back as a download's name, so it
 * holds no path (/, \, ..), no NUL or other control character, and is storable text of a sensible length.
 */
export function attachmentNameProblem(name: string): string | null {
  if (name.trim() === '') return 'The file has no name'
  if (name.length > MAX_ATTACHMENT_NAME) return `A file name has at most ${MAX_ATTACHMENT_NAME} characters`
  if (!isStorableText(name)) return 'The file name holds a character that cannot be stored (a NUL or a broken Unicode character)'
  // C0 and C1 control characters, DEL included.
  if (/[\u0000-\u001f\u007f-\u009f]/.test(name)) return 'The file name holds a control character'
  if (/[/\\]/.test(name)) return 'The file name holds a path character (/ or \\): give the file’s own name only'
  if (name.includes('..')) return 'The file name holds “..”, which could name another folder: rename the file'
  return null
}

/** One attachment as the routes answer it. */
export interface AttachmentView {
  id: number
  revisionId: number
  name: string
  size: number
  /** SHA-256 of the bytes, hex. */
  sha256: string
  type: AttachmentType
  uploadedBy: { id: number; name: string }
  uploadedAt: string
  /** GET /api/attachments/[id] */
  url: string
}

/** POST /api/sheets/[id]/attachments answers 201 with this. */
export type UploadedAttachment = Pick<AttachmentView, 'id' | 'name' | 'size' | 'sha256' | 'type'>

/** GET /api/sheets/[id]/attachments: the current revision's attachments (a client: only an issued one's). */
export interface SheetAttachments {
  revisionId: number
  attachments: AttachmentView[]
  /** The viewer may upload to the current revision (an engineer member; the revision draft or returned). */
  canUpload: boolean
  /** The viewer may delete the attachments shown (as for uploading). */
  canDelete: boolean
}

/** The first 12 hex digits: what a printed page and a person's eye compare (48 bits), beside a file or a PDF. */
export const shortHash = (hash: string) => hash.slice(0, 12)

/** A file's size for a person: bytes, KiB or MiB (binary units, as the 25 MiB limit is). */
export function formatFileSize(bytes: number): string {
  if (bytes < 1024) return `${bytes} byte${bytes === 1 ? '' : 's'}`
  if (bytes < 1024 * 1024) return `${Number((bytes / 1024).toFixed(1))} KiB`
  return `${Number((bytes / 1024 / 1024).toFixed(1))} MiB`
}

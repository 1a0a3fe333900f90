// POST /api/verify: is this PDF an issued Loopwright document? The browser sends only the file's SHA-256
// (crypto.subtle on the /verify page); the file itself never leaves the browser.
import { z } from 'zod'

export const verifyBodySchema = z.object({
  sha256: z
    .string({ required_error: 'Send the SHA-256 of the file', invalid_type_error: 'The SHA-256 must be text' })
    .regex(/^[0-9a-f]{64}$/, 'A SHA-256 is 64 lowercase hexadecimal digits'),
})
export type VerifyBody = z.infer<typeof verifyBodySchema>

/** A signature printed on the issued revision: who, in which role, what it means, when (ISO 8601, UTC). */
export interface VerifiedSignature {
  name: string
  role: string
  meaning: string
  signedAt: string
}

/** An issued revision of one sheet, as anyone holding its PDF may learn it. */
export interface VerifiedRevision {
  kind: 'revision'
  sheetNumber: string
  title: string
  loopTag: string
  projectNumber: string
  projectName: string
  client: string
  revision: string
  purpose: string | null
  issuedAt: string
  /** `superseded` once a later revision of the sheet is issued; the label of the sheet's current issued revision. */
  standing: 'current' | 'superseded'
  supersededAt: string | null
  currentRevision: string | null
  signatures: VerifiedSignature[]
  fileName: string
  pages: number | null
}

/** One issue of a package: its transmittal and the revisions it carried, each with its standing today. */
export interface VerifiedPackage {
  kind: 'package'
  packageNumber: string
  title: string
  projectNumber: string
  projectName: string
  client: string
  purpose: string
  issuedAt: string
  issuedBy: string
  sheets: Array<{ sheetNumber: string; title: string; revision: string; standing: 'current' | 'superseded' }>
  fileName: string
  pages: number | null
}

export type VerifyAnswer = { issued: true; document: VerifiedRevision | VerifiedPackage } | { issued: false; message: string }

export const notIssuedMessage = 'Not an issued Loopwright document'

import { z } from 'zod'
import { MAX_ID, idField, plainText, storable } from './text'
import type { SheetStatus } from './sheet'

/**
 * Bodies and answers of a sheet's life (product.md, "A sheet's life"; server/services/lifecycle.ts). Every body
 * names the `version` of the revision the person acted on, so an action on content they did not see is refused.
 */

const versionField = z
  .number({ required_error: 'The version is missing', invalid_type_error: 'The version is a number' })
  .int('The version is a whole number')
  .min(1, 'The version is at least 1')
  .max(MAX_ID, 'No such version')

/** The password typed again to sign: checked against the stored hash, never stored. */
const passwordField = storable(z.string({ required_error: 'Enter your password to sign', invalid_type_error: 'Enter your password to sign' }).min(1, 'Enter your password to sign').max(200))

export const issuePurposes = ['information', 'review', 'implementation'] as const
export type IssuePurpose = (typeof issuePurposes)[number]
export const issuePurposeNames: Record<IssuePurpose, string> = {
  information: 'For information',
  review: 'For review',
  implementation: 'For implementation',
}
/** The purpose in the words of a sentence or a PDF's subject: "issued for implementation". */
export function issuedForWords(purpose: IssuePurpose | string): string {
  const words = issuePurposeNames[purpose as IssuePurpose] as string | undefined
  return words ? `issued ${words.toLowerCase()}` : `issued for ${purpose}`
}
const purposeField = z.enum(issuePurposes, { errorMap: () => ({ message: 'Choose the purpose of issue' }) })

/** POST /api/sheets/[id]/submit and /revise */
export const versionOnlySchema = z.object({ version: versionField }).strict()
export type VersionBody = z.infer<typeof versionOnlySchema>

/** POST /api/sheets/[id]/return: the checker's reason goes to the preparer with the sheet. */
export const returnSchema = z.object({ version: versionField, reason: plainText(2000).optional().default('') }).strict()
export type ReturnBody = z.infer<typeof returnSchema>

/** POST /api/sheets/[id]/approve: a signature, so the checker's password again. */
export const approveSchema = z.object({ version: versionField, password: passwordField }).strict()
export type ApproveBody = z.infer<typeof approveSchema>

/** POST /api/sheets/[id]/issue: the issuer signs too. */
export const issueSchema = z.object({ version: versionField, purpose: purposeField, password: passwordField }).strict()
export type IssueBody = z.infer<typeof issueSchema>

/**
 * POST /api/packages/[id]/issue: the version of each sheet's current revision as the engineer saw it; the list must
 * name every sheet of the package, so a sheet added since is not issued unseen.
 */
export const packageIssueSchema = z
  .object({
    purpose: purposeField,
    password: passwordField,
    sheets: z
      .array(z.object({ sheetId: idField('Choose a sheet'), version: versionField }).strict())
      .min(1, 'A package issue names its sheets')
      .max(500, 'At most 500 sheets'),
  })
  .strict()
  .refine((body) => new Set(body.sheets.map((sheet) => sheet.sheetId)).size === body.sheets.length, {
    message: 'A sheet is named twice',
    path: ['sheets'],
  })
export type PackageIssueBody = z.infer<typeof packageIssueSchema>

export const lifecycleActions = ['submit', 'return', 'approve', 'issue', 'revise'] as const
export type LifecycleAction = (typeof lifecycleActions)[number]

/** Whether the person may take an action now, and when not, why (in words for the screen). */
export type Permission = { allowed: true } | { allowed: false; reason: string }

export const signatureMeanings = ['checked and approved', 'issued'] as const
export type SignatureMeaning = (typeof signatureMeanings)[number]

/** One signature as every screen shows it: `holds` is false once the document no longer hashes to `contentHash`. */
export interface SignatureView {
  id: number
  printedName: string
  role: 'checker' | 'engineer'
  meaning: SignatureMeaning
  signedAt: string
  contentHash: string
  engineVersion: string
  holds: boolean
}

/** The life of the current revision, part of GET /api/sheets/[id] (`SheetDetail.lifecycle`). */
export interface LifecycleView {
  status: SheetStatus
  /** SHA-256 of the RFC 8785 canonical JSON of the document as stored now. */
  contentHash: string
  actions: Record<LifecycleAction, Permission>
  signatures: SignatureView[]
  submittedAt: string | null
  approvedAt: string | null
  issuedAt: string | null
  purpose: IssuePurpose | null
  /** Whether the current revision has a stored PDF (issued revisions do). */
  hasPdf: boolean
}

/** The answer of every transition route: the sheet as it now stands is read again with GET. */
export interface TransitionAnswer {
  sheetId: number
  revisionId: number
  status: SheetStatus
  version: number
  label: string | null
}

/**
 * POST /api/sheets/[id]/issue and POST /api/packages/[id]/issue answer 202 with the job that renders and issues
 * (GET /api/jobs/[id] for its progress and, once done, its result).
 */
export interface IssueQueued {
  jobId: number
}
export type PackageIssueQueued = IssueQueued

/** The result of a single sheet's issue job once done: the sheet as the issue left it (read it again with GET). */
export type SheetIssueAnswer = TransitionAnswer

/** The result of that job once done. */
export interface PackageIssueAnswer {
  packageIssueId: number
  label: string
  pages: number
  issued: Array<{ sheetId: number; revisionId: number; label: string }>
  sha256: string
  fileName: string
}

// The client's portal (issue 8, item 9): what a client of a project's organisation sees of issued work, and the
// acknowledgement of receipt. Only issued and superseded revisions and issued packages: never a draft, a comment,
// a person list or another organisation's project.
import { z } from 'zod'
import type { IssuePurpose } from './lifecycle'

/**
 * POST /api/revisions/[id]/acknowledge: no fields. An issued revision is immutable, so there is no version to
 * name: the revision id is the content acknowledged. Anything but an empty object is refused (400).
 */
export const acknowledgeSchema = z.object({}).strict()
export type AcknowledgeBody = z.infer<typeof acknowledgeSchema>

/** The answer of an acknowledgement: its time, the first one's when the person had already acknowledged. */
export interface Acknowledgement {
  revisionId: number
  acknowledgedAt: string
  /** False when this call found the person's earlier acknowledgement and recorded nothing new. */
  recorded: boolean
}

/** One issued (or superseded) revision of a sheet, as the portal lists it. */
export interface PortalRevision {
  revisionId: number
  sheetId: number
  sheetNumber: string
  title: string
  loopTag: string
  label: string | null
  status: 'issued' | 'superseded'
  purpose: IssuePurpose | null
  issuedAt: string | null
  supersededAt: string | null
  fileName: string | null
  pdfUrl: string
  /** When the signed-in client acknowledged receipt; null until they do. */
  acknowledgedAt: string | null
}

/** One issue of a package: the sheets' revisions it carried, by id, and the package's own PDF. */
export interface PortalPackageIssue {
  packageIssueId: number
  packageId: number
  packageNumber: string
  title: string
  purpose: IssuePurpose
  issuedAt: string
  fileName: string
  revisionIds: number[]
  pdfUrl: string
}

export interface PortalProject {
  id: number
  number: string
  name: string
  /** Newest issue first within a sheet; sheets by number. */
  revisions: PortalRevision[]
  packageIssues: PortalPackageIssue[]
}

export interface Portal {
  organisationName: string | null
  projects: PortalProject[]
}

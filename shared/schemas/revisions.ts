import { z } from 'zod'
import type { SheetStatus } from './sheet'
import type { PersonRef } from './sheets'
import type { IssuePurpose } from './lifecycle'

/**
 * A sheet's revision history, the difference between two of its revisions, and the checker's recomputation
 * (issue 8, items 5 and 6).
 */

/** A revision index in a query (0, 1, 2…: the sheet's own numbering of its revisions), in digits only. */
const revisionIndexText = z
  .string({ required_error: 'Choose a revision', invalid_type_error: 'Choose one revision' })
  .regex(/^(0|[1-9][0-9]{0,3})$/, 'A revision is named by its index: 0, 1, 2…')
  .transform(Number)

/** GET /api/sheets/[id]/diff?from=&to=: two revision indexes of the sheet (not row ids), in either order. */
export const revisionDiffQuerySchema = z.object({ from: revisionIndexText, to: revisionIndexText }).strict()
export type RevisionDiffQuery = z.output<typeof revisionDiffQuerySchema>

/** A signature as the history and the print view show it: who, in which role, what it means, when (UTC), over what. */
export interface RevisionSignature {
  name: string
  role: string
  meaning: string
  signedAt: string
  /** The SHA-256 the signature binds to; `holds` while the revision's document still hashes to it. */
  contentHash: string
  holds: boolean
}

export interface RevisionSummary {
  id: number
  index: number
  /** Null until issued. */
  label: string | null
  status: SheetStatus
  version: number
  preparedBy: PersonRef
  editedBy: PersonRef
  editedAt: string
  createdAt: string
  engineVersion: string
  /** SHA-256 of the RFC 8785 canonical JSON of the revision's document as stored now (what a signature binds to). */
  contentHash: string
  /** The purpose of issue; null until issued. */
  purpose: IssuePurpose | null
  issuedAt: string | null
  issuedBy: PersonRef | null
  /** Its signatures, oldest first, each with whether the stored document still hashes to it. */
  signatures: RevisionSignature[]
  /** Comments not yet resolved; null for a client, who never sees comments. */
  openComments: number | null
  comments: number | null
}

/** GET /api/sheets/[id]/revisions: newest first. A client sees issued and superseded revisions only. */
export interface RevisionHistory {
  sheetId: number
  number: string
  title: string
  revisions: RevisionSummary[]
}

/** One field of an input that differs between two revisions, each side as the engineer wrote it (null: absent). */
export interface FieldChange {
  field: string
  before: string | null
  after: string | null
}

export interface ItemChange {
  /** The parameter symbol, block id or criterion name. */
  key: string
  change: 'added' | 'removed' | 'changed'
  fields: FieldChange[]
}

/** A piece of a text section's word diff. */
export interface TextPart {
  value: string
  added?: boolean
  removed?: boolean
}

export interface TextChange {
  section: string
  label: string
  before: string
  after: string
  parts: TextPart[]
}

/**
 * A difference between two results: a figure whose printed value differs (through the app's one formatter, at
 * the sheet's 4 significant figures: a difference within rounding is none), a verdict (stable, pass or fail), or
 * a warning that one result gives and the other does not.
 */
export interface ResultChange {
  kind: 'figure' | 'verdict' | 'warning' | 'result'
  /** What it is: `margins.phase_margin_deg`, `criteria.overshoot_pct.pass`, `warnings`. */
  quantity: string
  label: string
  before: string | null
  after: string | null
}

export interface RevisionDiff {
  sheetId: number
  from: RevisionSummary
  to: RevisionSummary
  parameters: ItemChange[]
  blocks: ItemChange[]
  /** The print order of the blocks, when it changed. */
  blockOrder: FieldChange | null
  /** The loop's structure as one line of text, when it changed; and the delay approximation and stability range. */
  structure: FieldChange[]
  criteria: ItemChange[]
  text: TextChange[]
  results: ResultChange[]
  /** Nothing differs at all. */
  same: boolean
}

/** GET /api/revisions/[id]/recomputation: the stored result against the engine as it is now. */
export interface Recomputation {
  revisionId: number
  status: SheetStatus
  version: number
  stored: { engineVersion: string; savedAt: string; savedBy: PersonRef; present: boolean }
  now: { engineVersion: string; computedAt: string }
  /** The engine now refuses the stored document (the message), or null. */
  refusal: string | null
  differences: ResultChange[]
  agrees: boolean
}

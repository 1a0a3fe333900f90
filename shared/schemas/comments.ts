import { z } from 'zod'
import { MAX_ID, plainText, recordKey } from './text'
import type { PersonRef } from './sheets'

/**
 * The checker's comments on a revision (product.md, "Who uses it": a checker comments on any section; issue 8,
 * item 3). A comment is anchored to what it concerns:
 * - `section`: one of `commentSections`, the sheet's parts in print order;
 * - `block`: a block id of the revision's loop;
 * - `parameter`: a parameter symbol of the revision's loop;
 * - `step`: a derivation step, named by its number (1, 2, …) in the derivation of the revision's stored result
 *   (`result.steps`, in order). The step's kind and title are copied into the comment when it is written, so the
 *   comment still says which step it meant after a later save changes the derivation.
 */
export const commentAnchorKinds = ['section', 'block', 'parameter', 'step'] as const
export type CommentAnchorKind = (typeof commentAnchorKinds)[number]

/** The sheet's sections a comment may concern, in print order (product.md, "What a sheet holds"), with their names. */
export const commentSections = {
  title: 'Title block',
  scope: 'Purpose and scope',
  references: 'References',
  assumptions: 'Assumptions',
  inputs: 'Inputs (parameter table)',
  blocks: 'Block models',
  structure: 'Loop structure and diagram',
  derivation: 'Derivation',
  stability: 'Stability',
  performance: 'Performance',
  criteria: 'Acceptance criteria',
  safety: 'Safety notes and cautions',
  conclusions: 'Conclusions',
} as const
export type CommentSection = keyof typeof commentSections
export const commentSectionKeys = Object.keys(commentSections) as CommentSection[]

/** The revision's version the person acted on: an action on content they did not see is refused (409). */
const versionField = z
  .number({ required_error: 'The version is missing', invalid_type_error: 'The version is a number' })
  .int('The version is a whole number')
  .min(1, 'The version is at least 1')
  .max(MAX_ID, 'No such version')

export const commentTextSchema = plainText(4000, 1, 'Write the comment')

/** POST /api/revisions/[id]/comments */
export const newCommentSchema = z
  .object({
    version: versionField,
    anchorKind: z.enum(commentAnchorKinds, { errorMap: () => ({ message: 'Choose what the comment concerns' }) }),
    /** A section key, block id, parameter symbol, or step number written in digits. */
    anchor: recordKey.pipe(z.string().min(1, 'Choose what the comment concerns')),
    body: commentTextSchema,
  })
  .strict()
  .superRefine((body, ctx) => {
    if (body.anchorKind === 'section' && !(commentSectionKeys as string[]).includes(body.anchor))
      ctx.addIssue({ code: 'custom', path: ['anchor'], message: 'No such section' })
    if (body.anchorKind === 'step' && !/^[1-9][0-9]{0,3}$/.test(body.anchor))
      ctx.addIssue({ code: 'custom', path: ['anchor'], message: 'A step is named by its number' })
  })
export type NewCommentBody = z.infer<typeof newCommentSchema>

/** PATCH /api/comments/[id]: the engineer answers, a checker resolves. */
export const commentUpdateSchema = z.discriminatedUnion(
  'action',
  [
    z.object({ action: z.literal('answer'), version: versionField, answer: plainText(4000, 1, 'Write the answer') }).strict(),
    z.object({ action: z.literal('resolve'), version: versionField }).strict(),
  ],
  { errorMap: () => ({ message: 'Choose to answer or to resolve' }) },
)
export type CommentUpdateBody = z.infer<typeof commentUpdateSchema>

export type CommentState = 'open' | 'answered' | 'resolved'

export interface CommentRow {
  id: number
  revisionId: number
  anchorKind: CommentAnchorKind
  anchor: string
  /** How the anchor reads: the section's name, the block's label, the parameter's description, the step's title. */
  anchorLabel: string
  body: string
  author: PersonRef
  revisionVersion: number
  createdAt: string
  state: CommentState
  answer: string | null
  answeredBy: PersonRef | null
  answeredAt: string | null
  resolvedBy: PersonRef | null
  resolvedAt: string | null
}

/** GET /api/revisions/[id]/comments: the comments, oldest first, and what the viewer may do with them. */
export interface RevisionComments {
  revisionId: number
  status: string
  version: number
  comments: CommentRow[]
  open: number
  /** A checker of the project who neither prepared nor edited the revision, while it is in check. */
  canComment: boolean
  canResolve: boolean
  /** An engineer of the project, while the revision is in check or returned. */
  canAnswer: boolean
  /** Why the viewer may not comment, when they may not. */
  whyNot: string | null
}

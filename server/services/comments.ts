// The checker's comments on a revision (issue 8, item 3): a checker writes, the engineer answers, a checker
// resolves; open comments block approval (`openCommentCount`, for the state machine's approve). Comments stay with
// their revision and are never shown to clients: every refusal is answered as a value the route audits (403).
import { and, asc, eq, isNull, sql } from 'drizzle-orm'
import { alias } from 'drizzle-orm/pg-core'
import { createError } from 'h3'
import { comments, people } from '../db/schema'
import type { Database } from '../utils/db'
import {
  commentSections,
  type CommentAnchorKind,
  type CommentRow,
  type CommentSection,
  type CommentUpdateBody,
  type NewCommentBody,
  type RevisionComments,
} from '../../shared/schemas/comments'
import type { SheetDocument } from '../../shared/schemas/sheet'
import { recordAuditEvent, type AuditContext } from './audit-trail'
import type { Executor } from './audited'
import { loadRevision, preparedOrEdited, reviewRights, type LoadedRevision, type ReviewRights } from './review-access'
import { refused, type Refused, type Viewer } from './sheets'

/** Comments on `revisionId` not yet resolved: approval is refused while there are any. */
export async function openCommentCount(tx: Executor, revisionId: number): Promise<number> {
  const [row] = await tx
    .select({ n: sql<number>`count(*)::int` })
    .from(comments)
    .where(and(eq(comments.revisionId, revisionId), isNull(comments.resolvedAt)))
  return row?.n ?? 0
}

interface Allowed {
  canComment: boolean
  canResolve: boolean
  canAnswer: boolean
  whyNot: string | null
}

/** What `viewer` may do with the comments of `revision` (their rights on its project given). */
async function allowed(db: Executor, revision: LoadedRevision, rights: ReviewRights, viewer: Viewer): Promise<Allowed> {
  const inCheck = revision.status === 'in check'
  const own = rights.checker && (await preparedOrEdited(db, revision, viewer.id))
  const checks = rights.checker && inCheck && !own
  let whyNot: string | null = null
  if (!rights.checker) whyNot = 'Only checkers of this project comment'
  else if (own) whyNot = 'You prepared or edited this revision: another checker reviews it'
  else if (!inCheck) whyNot = `Comments are written while a revision is in check; this one is ${revision.status}`
  return { canComment: checks, canResolve: checks, canAnswer: rights.engineer && (inCheck || revision.status === 'returned'), whyNot }
}

/** The revision and the viewer's rights, or the refusal: a client, or someone outside the project. */
async function reviewable(db: Executor, revisionId: number, viewer: Viewer, lock = false) {
  const revision = await loadRevision(db, revisionId, lock)
  const rights = await reviewRights(db, revision.projectId, viewer)
  if (!rights.staff) {
    return refused(rights.client ? 'Comments are not shown to clients' : 'You are not a member of this sheet’s project', { revisionId })
  }
  return { revision, rights }
}

const author = alias(people, 'author')
const answerer = alias(people, 'answerer')
const resolver = alias(people, 'resolver')

/** How an anchor reads on screen, from the revision's document (a block's label, a parameter's description). */
function labelOf(kind: CommentAnchorKind, anchor: string, stored: string | null, document: SheetDocument): string {
  if (kind === 'section') return commentSections[anchor as CommentSection] ?? anchor
  if (kind === 'block') {
    const label = document.loop.blocks[anchor]?.label
    return label ? `Block ${anchor}: ${label}` : `Block ${anchor}`
  }
  if (kind === 'parameter') {
    const description = document.parameters.find((p) => p.symbol === anchor)?.description
    return description ? `Parameter ${anchor}: ${description}` : `Parameter ${anchor}`
  }
  return stored ?? `Derivation step ${anchor}`
}

async function rowsOf(db: Executor, revision: LoadedRevision, where = eq(comments.revisionId, revision.id)): Promise<CommentRow[]> {
  const rows = await db
    .select({
      comment: comments,
      authorName: author.name,
      answeredByName: answerer.name,
      resolvedByName: resolver.name,
    })
    .from(comments)
    .innerJoin(author, eq(author.id, comments.authorId))
    .leftJoin(answerer, eq(answerer.id, comments.answeredBy))
    .leftJoin(resolver, eq(resolver.id, comments.resolvedBy))
    .where(where)
    .orderBy(asc(comments.id))
  const document = revision.document as SheetDocument
  return rows.map(({ comment: c, authorName, answeredByName, resolvedByName }) => ({
    id: c.id,
    revisionId: c.revisionId,
    anchorKind: c.anchorKind as CommentAnchorKind,
    anchor: c.anchor,
    anchorLabel: labelOf(c.anchorKind as CommentAnchorKind, c.anchor, c.anchorLabel, document),
    body: c.body,
    author: { id: c.authorId, name: authorName },
    revisionVersion: c.revisionVersion,
    createdAt: c.createdAt.toISOString(),
    state: c.resolvedAt ? 'resolved' : c.answeredAt ? 'answered' : 'open',
    answer: c.answer,
    answeredBy: c.answeredBy && answeredByName ? { id: c.answeredBy, name: answeredByName } : null,
    answeredAt: c.answeredAt?.toISOString() ?? null,
    resolvedBy: c.resolvedBy && resolvedByName ? { id: c.resolvedBy, name: resolvedByName } : null,
    resolvedAt: c.resolvedAt?.toISOString() ?? null,
  }))
}

async function answerOf(db: Executor, revision: LoadedRevision, rights: ReviewRights, viewer: Viewer): Promise<RevisionComments> {
  const rows = await rowsOf(db, revision)
  return {
    revisionId: revision.id,
    status: revision.status,
    version: revision.version,
    comments: rows,
    open: rows.filter((row) => row.state !== 'resolved').length,
    ...(await allowed(db, revision, rights, viewer)),
  }
}

/** GET /api/revisions/[id]/comments */
export async function listComments(db: Database, revisionId: number, viewer: Viewer): Promise<RevisionComments | Refused> {
  const found = await reviewable(db, revisionId, viewer)
  if ('refused' in found) return found
  return answerOf(db, found.revision, found.rights, viewer)
}

function badAnchor(message: string): never {
  throw createError({
    statusCode: 400,
    statusMessage: 'Some fields need attention',
    data: { field: 'anchor', message, issues: { formErrors: [], fieldErrors: { anchor: [message] } } },
  })
}

/** The anchor checked against the revision it is written on; answers the step's title to keep with the comment. */
function checkedAnchor(body: NewCommentBody, revision: LoadedRevision): string | null {
  const document = revision.document as SheetDocument
  if (body.anchorKind === 'block' && !document.loop.blocks[body.anchor]) badAnchor(`This revision has no block "${body.anchor}"`)
  if (body.anchorKind === 'parameter' && !document.loop.parameters[body.anchor]) badAnchor(`This revision has no parameter "${body.anchor}"`)
  if (body.anchorKind === 'step') {
    const steps = (revision.result as { steps?: Array<{ kind?: string; title?: string }> } | null)?.steps ?? []
    const step = steps[Number(body.anchor) - 1]
    if (!step) badAnchor(`The derivation of this revision has ${steps.length} steps`)
    return `Derivation step ${body.anchor}: ${step.title ?? step.kind ?? ''}`.trim()
  }
  return null
}

/** 409 when the person acted on a version of the revision they no longer see; the refusal is audited. */
async function stale(db: Executor, context: AuditContext, revision: LoadedRevision, version: number, action: string): Promise<never> {
  await recordAuditEvent(db, context, {
    action,
    subjectType: 'revision',
    subjectId: revision.id,
    status: 409,
    detail: { staleVersion: version, storedVersion: revision.version },
  })
  throw createError({
    statusCode: 409,
    statusMessage: 'This revision changed since you loaded it',
    data: { version: revision.version },
  })
}

/** POST /api/revisions/[id]/comments: a checker of the project comments on a revision in check. */
export async function addComment(
  db: Database,
  revisionId: number,
  body: NewCommentBody,
  viewer: Viewer,
  context: AuditContext,
): Promise<RevisionComments | Refused> {
  const first = await reviewable(db, revisionId, viewer)
  if ('refused' in first) return first
  const may = await allowed(db, first.revision, first.rights, viewer)
  if (!may.canComment) return refused(may.whyNot ?? 'You may not comment on this revision', { revisionId, status: first.revision.status })
  const anchorLabel = checkedAnchor(body, first.revision)
  const outcome = await db.transaction(async (tx) => {
    // The revision's row lock: a save or a transition racing the comment waits, and the version is read afresh.
    const revision = await loadRevision(tx, revisionId, true)
    if (revision.status !== 'in check') return refused(`Comments are written while a revision is in check; this one is ${revision.status}`, { revisionId })
    if (revision.version !== body.version) return { kind: 'stale' as const, revision }
    const [created] = await tx
      .insert(comments)
      .values({ revisionId, anchorKind: body.anchorKind, anchor: body.anchor, anchorLabel, body: body.body, authorId: viewer.id, revisionVersion: revision.version })
      .returning({ id: comments.id })
    await recordAuditEvent(tx, context, {
      action: 'comment.created',
      subjectType: 'comment',
      subjectId: created!.id,
      detail: { revisionId, anchorKind: body.anchorKind, anchor: body.anchor, version: revision.version },
    })
    return { kind: 'done' as const, revision }
  })
  if ('refused' in outcome) return outcome
  if (outcome.kind === 'stale') return stale(db, context, outcome.revision, body.version, 'comment.create-refused')
  return answerOf(db, outcome.revision, first.rights, viewer)
}

/** PATCH /api/comments/[id]: an engineer of the project answers; a checker who may check the revision resolves. */
export async function updateComment(
  db: Database,
  commentId: number,
  body: CommentUpdateBody,
  viewer: Viewer,
  context: AuditContext,
): Promise<RevisionComments | Refused> {
  const [comment] = await db.select({ revisionId: comments.revisionId }).from(comments).where(eq(comments.id, commentId))
  if (!comment) throw createError({ statusCode: 404, statusMessage: 'No such comment' })
  const first = await reviewable(db, comment.revisionId, viewer)
  if ('refused' in first) return first
  const may = await allowed(db, first.revision, first.rights, viewer)
  if (body.action === 'answer' && !may.canAnswer) {
    return refused(first.rights.engineer ? `A revision ${first.revision.status} takes no answers` : 'Only engineers of this project answer comments', { commentId })
  }
  if (body.action === 'resolve' && !may.canResolve) return refused(may.whyNot ?? 'You may not resolve this comment', { commentId })

  const outcome = await db.transaction(async (tx) => {
    const revision = await loadRevision(tx, comment.revisionId, true)
    if (revision.status !== first.revision.status) return refused(`The revision is now ${revision.status}`, { commentId })
    if (revision.version !== body.version) return { kind: 'stale' as const, revision }
    const [current] = await tx.select().from(comments).where(eq(comments.id, commentId)).for('update')
    if (current!.resolvedAt) return { kind: 'resolved' as const, revision }
    const now = new Date()
    if (body.action === 'answer') {
      await tx.update(comments).set({ answer: body.answer, answeredBy: viewer.id, answeredAt: now, answeredVersion: revision.version }).where(eq(comments.id, commentId))
    } else {
      await tx.update(comments).set({ resolvedBy: viewer.id, resolvedAt: now, resolvedVersion: revision.version }).where(eq(comments.id, commentId))
    }
    await recordAuditEvent(tx, context, {
      action: body.action === 'answer' ? 'comment.answered' : 'comment.resolved',
      subjectType: 'comment',
      subjectId: commentId,
      detail: { revisionId: revision.id, version: revision.version },
    })
    return { kind: 'done' as const, revision }
  })
  if ('refused' in outcome) return outcome
  if (outcome.kind === 'stale') return stale(db, context, outcome.revision, body.version, `comment.${body.action}-refused`)
  if (outcome.kind === 'resolved') {
    await recordAuditEvent(db, context, { action: `comment.${body.action}-refused`, subjectType: 'comment', subjectId: commentId, status: 409, detail: { reason: 'already resolved' } })
    throw createError({ statusCode: 409, statusMessage: 'This comment is already resolved', data: { version: outcome.revision.version } })
  }
  return answerOf(db, outcome.revision, first.rights, viewer)
}

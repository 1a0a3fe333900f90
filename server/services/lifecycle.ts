// The one state machine of a sheet's life (product.md, "A sheet's life"):
//   draft → in check (submit, an engineer member) → approved (approve, a checker member, with a signature)
//                   ↘ returned (return, a checker member; editable like a draft, submitted again)
//   approved → issued (issue, an engineer member, with a signature and the stored PDF) → superseded (when a later
//   revision of the sheet is issued); revise: the next revision as a draft, its content copied from an issued or
//   approved current revision.
// Every transition is one transaction with its audit row. It takes the sheet's row lock first and then the
// revision's (SELECT … FOR UPDATE; sheet saves take them in the same order), re-reads the state under the locks, and
// acts only when the body's `version` is the stored one: an action on content the person did not see is refused
// (409 with the stored sheet). A role or membership the person lacks, or a revision they prepared or edited (for
// the checker's actions), is refused 403 and audited. An admin acts only through a role they hold on the project.
import { and, asc, eq, inArray, isNotNull, sql } from 'drizzle-orm'
import { createError } from 'h3'
import {
  organisations,
  packageIssues,
  packages,
  people,
  projectMembers,
  projects,
  revisionEditors,
  revisionPdfs,
  sheetRevisions,
  sheets,
  signatures,
} from '../db/schema'
import type { Database } from '../utils/db'
import type { ProjectRole, Role } from '../../shared/schemas/roles'
import type { SheetDocument, SheetStatus } from '../../shared/schemas/sheet'
import { nextRevisionLabel } from '../../shared/schemas/firm'
import { openCommentCount } from './comments'
import {
  issuePurposeNames,
  type ApproveBody,
  type IssueBody,
  type IssuePurpose,
  type LifecycleAction,
  type LifecycleView,
  type PackageIssueAnswer,
  type PackageIssueBody,
  type IssueQueued,
  type PackageIssueQueued,
  type Permission,
  type ReturnBody,
  type SheetIssueAnswer,
  type SignatureMeaning,
  type SignatureView,
  type TransitionAnswer,
  type VersionBody,
} from '../../shared/schemas/lifecycle'
import { ENGINE_VERSION } from '../../shared/calc/version'
import { contentHash } from '../utils/content-hash'
import { recordAuditEvent, type AuditContext } from './audit-trail'
import type { Executor, Transaction } from './audited'
import { readFirmSettings } from './firm'
import { queueMail, type QueuedMail } from './outbox'
import { newestIssuedRevision, refused, viewSheet, type Refused } from './sheets'
import type { PdfRenderer, RenderedPdf } from './issue-pdf'
import { enqueueJob, JobFailure, type JobContext } from './jobs'
import type { CoverFacts, PackagePart } from './package-pdf'
import { renderTabs } from './pdf-render'

// ---------------------------------------------------------------------------------------------------------------
// Who may do what

/** The person as the state machine sees them: their global roles and their roles on the sheet's project. */
export interface PersonOnProject {
  id: number
  roles: Role[]
  projectRoles: ProjectRole[]
}

/** What the state machine needs to know of a revision. */
export interface RevisionFacts {
  status: SheetStatus
  /** The highest revision of its sheet (only the current revision moves). */
  isCurrent: boolean
  preparedBy: number
  /** Everyone who made or edited it (revision_editors). */
  editors: number[]
  /** The engine computed it at the last save. */
  hasResult: boolean
  /** The approval signature exists and the document still hashes to it; null when there is none. */
  approvalHolds: boolean | null
  /** The checker's comments not yet resolved: open comments block approval (issue 8, item 3). */
  openComments: number
}

const holds = (person: PersonOnProject, role: 'engineer' | 'checker') => person.roles.includes(role) && person.projectRoles.includes(role)
const no = (reason: string): Permission => ({ allowed: false, reason })
const yes: Permission = { allowed: true }

/** For each action, whether `person` may take it on `revision` now, and the reason when not. */
export function canDo(person: PersonOnProject, revision: RevisionFacts): Record<LifecycleAction, Permission> {
  const engineer = holds(person, 'engineer')
  const checker = holds(person, 'checker')
  const ownWork = revision.preparedBy === person.id || revision.editors.includes(person.id)
  const { status } = revision
  const notCurrent = no('This is not the current revision of the sheet')

  const submit = !revision.isCurrent
    ? notCurrent
    : !engineer
      ? no('Only an engineer of this project submits a sheet for check')
      : status !== 'draft' && status !== 'returned'
        ? no(`A sheet ${status} is not submitted for check`)
        : !revision.hasResult
          ? no('The engine could not compute this revision: correct the loop before submitting it')
          : yes

  const checkAction = (verb: string): Permission =>
    !revision.isCurrent
      ? notCurrent
      : !checker
        ? no(`Only a checker of this project ${verb} a sheet`)
        : status !== 'in check'
          ? no(`Only a sheet in check can be ${verb === 'returns' ? 'returned' : 'approved'}; this one is ${status}`)
          : ownWork
            ? no('You prepared or edited this revision: another checker must check it')
            : verb === 'approves' && revision.openComments > 0
              ? no(`${revision.openComments === 1 ? 'One comment is' : `${revision.openComments} comments are`} still open: resolve ${revision.openComments === 1 ? 'it' : 'them'} before approving`)
              : yes

  const issue = !revision.isCurrent
    ? notCurrent
    : !engineer
      ? no('Only an engineer of this project issues a sheet')
      : status !== 'approved'
        ? no(status === 'issued' ? 'This revision is already issued' : `Only an approved sheet is issued; this one is ${status}`)
        : revision.approvalHolds !== true
          ? no('The checker’s signature no longer matches the content: the sheet must be checked again')
          : yes

  const revise = !revision.isCurrent
    ? notCurrent
    : !engineer
      ? no('Only an engineer of this project starts a new revision')
      : status !== 'issued' && status !== 'approved'
        ? no(status === 'draft' || status === 'returned' ? 'This revision is still being written: edit it' : `A sheet ${status} is not revised`)
        : yes

  return { submit, return: checkAction('returns'), approve: checkAction('approves'), issue, revise }
}

// ---------------------------------------------------------------------------------------------------------------
// Reading the state

export interface Viewer {
  id: number
  roles: Role[]
  name?: string
}

async function projectRolesOf(db: Executor, projectId: number, personId: number): Promise<ProjectRole[]> {
  const rows = await db
    .select({ role: projectMembers.role })
    .from(projectMembers)
    .where(and(eq(projectMembers.projectId, projectId), eq(projectMembers.personId, personId)))
  return rows.map((row) => row.role as ProjectRole)
}

/** The sheet and its current revision; under the sheet's and the revision's row locks when `lock` (in a transaction). */
/** The sheet and its current revision (or the revision at `revisionIndex`, to read), with the facts canDo weighs. */
async function loadState(db: Executor, sheetId: number, lock: boolean, revisionIndex?: number) {
  const sheetQuery = db
    .select({ id: sheets.id, projectId: sheets.projectId, number: sheets.number, title: sheets.title, loopTag: sheets.loopTag, currentIndex: sheets.currentRevisionIndex })
    .from(sheets)
    .where(eq(sheets.id, sheetId))
  const [sheet] = lock ? await sheetQuery.for('update') : await sheetQuery
  if (!sheet) return null
  const revisionQuery = db
    .select()
    .from(sheetRevisions)
    .where(and(eq(sheetRevisions.sheetId, sheetId), eq(sheetRevisions.revisionIndex, revisionIndex ?? sheet.currentIndex)))
  const [revision] = lock ? await revisionQuery.for('update') : await revisionQuery
  if (!revision) return null
  const [editors, signed, openComments] = await Promise.all([
    db.select({ personId: revisionEditors.personId }).from(revisionEditors).where(eq(revisionEditors.revisionId, revision.id)),
    db.select().from(signatures).where(eq(signatures.revisionId, revision.id)).orderBy(asc(signatures.signedAt), asc(signatures.id)),
    openCommentCount(db, revision.id),
  ])
  const hash = contentHash(revision.document)
  const approval = signed.find((signature) => signature.meaning === 'checked and approved')
  const facts: RevisionFacts = {
    status: revision.status as SheetStatus,
    isCurrent: revision.revisionIndex === sheet.currentIndex,
    preparedBy: revision.preparedBy,
    editors: editors.map((row) => row.personId),
    hasResult: revision.result !== null,
    approvalHolds: approval ? approval.contentHash === hash : null,
    openComments,
  }
  return { sheet, revision, facts, hash, signed }
}
type State = NonNullable<Awaited<ReturnType<typeof loadState>>>

function signatureViews(state: Pick<State, 'signed' | 'hash'>): SignatureView[] {
  return state.signed.map((signature) => ({
    id: signature.id,
    printedName: signature.printedName,
    role: signature.role as SignatureView['role'],
    meaning: signature.meaning as SignatureMeaning,
    signedAt: signature.signedAt.toISOString(),
    contentHash: signature.contentHash,
    engineVersion: signature.engineVersion,
    holds: signature.contentHash === state.hash,
  }))
}

/**
 * The lifecycle part of GET /api/sheets/[id], for `viewer`: of the current revision, or of the one at `revisionIndex`.
 * `issuedOnly` (a client's view) reads the sheet as ending at its newest issued revision: that one is current to
 * them, and no answer says that a later revision exists.
 */
export async function lifecycleView(
  db: Database,
  sheetId: number,
  viewer: Viewer,
  shown: { revisionIndex?: number; issuedOnly?: boolean } = {},
): Promise<LifecycleView | null> {
  const state = await loadState(db, sheetId, false, shown.revisionIndex)
  if (!state) return null
  if (shown.issuedOnly) state.facts.isCurrent = state.revision.revisionIndex === (await newestIssuedRevision(db, sheetId))?.index
  const person = { ...viewer, projectRoles: await projectRolesOf(db, state.sheet.projectId, viewer.id) }
  const [pdf] = await db.select({ id: revisionPdfs.revisionId }).from(revisionPdfs).where(eq(revisionPdfs.revisionId, state.revision.id))
  return {
    status: state.facts.status,
    contentHash: state.hash,
    actions: canDo(person, state.facts),
    signatures: signatureViews(state),
    submittedAt: state.revision.submittedAt?.toISOString() ?? null,
    approvedAt: state.revision.approvedAt?.toISOString() ?? null,
    issuedAt: state.revision.issuedAt?.toISOString() ?? null,
    purpose: (state.revision.purpose as IssuePurpose | null) ?? null,
    hasPdf: Boolean(pdf),
  }
}

// ---------------------------------------------------------------------------------------------------------------
// Signing

export interface Signing {
  /** nuxt-auth-utils' verifyPassword against the stored hash. */
  verify: (hash: string, plain: string) => Promise<boolean>
}

// A signature's password is a second factor of intent, so guessing at it from an open session is held back: five
// wrong passwords in 15 minutes per person, then 429 (common practice; the same figures as sign-in's limit). Kept
// in the process's memory, like the other per-person limits (DEVELOPERS.md, "Limits per person").
const wrongPasswords = new Map<number, number[]>()
const WRONG_PASSWORD_LIMIT = 5
const WRONG_PASSWORD_WINDOW_MS = 15 * 60_000

function recentFailures(personId: number): number[] {
  const now = Date.now()
  const kept = (wrongPasswords.get(personId) ?? []).filter((at) => now - at < WRONG_PASSWORD_WINDOW_MS)
  wrongPasswords.set(personId, kept)
  return kept
}

/** Null when the password is the person's own; otherwise the refusal. */
async function checkPassword(db: Database, viewer: Viewer, password: string, signing: Signing): Promise<Refused | null> {
  const failures = recentFailures(viewer.id)
  if (failures.length >= WRONG_PASSWORD_LIMIT) {
    const retryAfter = Math.ceil((failures[0]! + WRONG_PASSWORD_WINDOW_MS - Date.now()) / 1000)
    throw createError({ statusCode: 429, statusMessage: 'Too many wrong passwords: wait before signing again', data: { retryAfterSeconds: retryAfter } })
  }
  const [person] = await db.select({ hash: people.passwordHash, active: people.active }).from(people).where(eq(people.id, viewer.id))
  if (person?.hash && person.active && (await signing.verify(person.hash, password))) return null
  failures.push(Date.now())
  return refused('The password is not right: the signature was not made', { signature: 'password' })
}

async function printedNameOf(db: Executor, personId: number): Promise<string> {
  const [person] = await db.select({ name: people.name }).from(people).where(eq(people.id, personId))
  return person?.name ?? `person ${personId}`
}

// ---------------------------------------------------------------------------------------------------------------
// E-mail

export interface Links {
  /** The site's own address, for links in e-mail. */
  siteUrl: string
}
const sheetLink = (links: Links, sheetId: number) => `${links.siteUrl.replace(/\/$/, '')}/sheets/${sheetId}`
/**
 * The issued document in the client's portal (their home page, the revision marked): a link to the PDF route itself
 * answered a signed-out reader with a bare 401, where this page sends them to sign in first and back here after.
 */
const documentLink = (links: Links, revisionId: number) => `${links.siteUrl.replace(/\/$/, '')}/?revision=${revisionId}`

async function checkersOf(db: Executor, projectId: number, except: number[]) {
  const rows = await db
    .selectDistinct({ id: people.id, email: people.email, name: people.name })
    .from(projectMembers)
    .innerJoin(people, eq(people.id, projectMembers.personId))
    .where(and(eq(projectMembers.projectId, projectId), eq(projectMembers.role, 'checker'), eq(people.active, true), sql`'checker' = any(${people.roles})`))
  return rows.filter((row) => !except.includes(row.id))
}

async function clientContactsOf(db: Executor, projectId: number) {
  return db
    .select({ email: people.email, name: people.name })
    .from(people)
    .innerJoin(projects, eq(projects.organisationId, people.organisationId))
    .where(and(eq(projects.id, projectId), eq(people.active, true), sql`'client' = any(${people.roles})`))
}

async function emailOf(db: Executor, personId: number) {
  const [person] = await db.select({ email: people.email, name: people.name, active: people.active }).from(people).where(eq(people.id, personId))
  return person?.active ? person : null
}

// ---------------------------------------------------------------------------------------------------------------
// Transitions

type Outcome<T> = { kind: 'done'; value: T } | { kind: 'refused'; refusal: Refused } | { kind: 'conflict'; reason: string }

/** 409 with the sheet as stored, after recording the refusal (the transaction that found it rolled back). */
async function conflict(db: Database, context: AuditContext, sheetId: number, viewer: Viewer, action: string, reason: string, detail: Record<string, unknown>): Promise<never> {
  await recordAuditEvent(db, context, { action: `sheet.${action}-refused`, subjectType: 'sheet', subjectId: sheetId, status: 409, detail: { reason, ...detail } })
  const current = await viewSheet(db, sheetId, viewer)
  throw createError({ statusCode: 409, statusMessage: reason, data: { reason, current: 'refused' in current ? null : current } })
}

interface Step<T> {
  action: LifecycleAction
  version: number
  /** The work under the locks, once the person may act and the version is the stored one. */
  work: (tx: Transaction, state: State) => Promise<T>
}

/** Thrown by a step's work when what it finds under the locks forbids it: the work rolls back, answered as a conflict. */
class StepConflict extends Error {}

/**
 * One transition's transaction: locks, checks who and what under the locks, does the work; answers the outcome, so
 * the request (transition: 403, 409) and the issue job (runSheetIssue: a JobFailure) each answer a refusal their way.
 */
async function lockedStep<T>(db: Database, sheetId: number, viewer: Viewer, step: Step<T>): Promise<Outcome<T>> {
  return db.transaction(async (tx): Promise<Outcome<T>> => {
    const state = await loadState(tx, sheetId, true)
    if (!state) throw createError({ statusCode: 404, statusMessage: 'No such sheet' })
    const person = { ...viewer, projectRoles: await projectRolesOf(tx, state.sheet.projectId, viewer.id) }
    if (person.projectRoles.length === 0 && !viewer.roles.includes('admin')) {
      return { kind: 'refused', refusal: refused('You are not a member of this sheet’s project', { sheetId }) }
    }
    const permission = canDo(person, state.facts)[step.action]
    if (!permission.allowed) {
      // A state the action does not leave is a conflict; a role, a membership or one's own work is a refusal.
      const byState = holdsRoleFor(person, step.action) && !isIndependenceRefusal(person, state.facts, step.action)
      if (byState) return { kind: 'conflict', reason: permission.reason }
      return { kind: 'refused', refusal: refused(permission.reason, { sheetId, action: step.action, status: state.facts.status }) }
    }
    if (state.revision.version !== step.version) {
      return { kind: 'conflict', reason: 'This sheet changed since you loaded it: read it again before you act' }
    }
    return { kind: 'done', value: await step.work(tx, state) }
  }).catch((error: unknown) => {
    if (error instanceof StepConflict) return { kind: 'conflict', reason: error.message } as const
    throw error
  })
}

/** Runs one transition: locks, checks who and what under the locks, does the work, and audits; or refuses. */
async function transition<T>(db: Database, context: AuditContext, sheetId: number, viewer: Viewer, step: Step<T>): Promise<T | Refused> {
  const outcome = await lockedStep(db, sheetId, viewer, step)
  if (outcome.kind === 'done') return outcome.value
  if (outcome.kind === 'refused') return outcome.refusal
  return conflict(db, context, sheetId, viewer, step.action, outcome.reason, { version: step.version })
}

function holdsRoleFor(person: PersonOnProject, action: LifecycleAction): boolean {
  return holds(person, action === 'return' || action === 'approve' ? 'checker' : 'engineer')
}
function isIndependenceRefusal(person: PersonOnProject, facts: RevisionFacts, action: LifecycleAction): boolean {
  return (action === 'return' || action === 'approve') && facts.status === 'in check' && (facts.preparedBy === person.id || facts.editors.includes(person.id))
}

const answerOf = (state: State, status: SheetStatus, label: string | null = state.revision.label): TransitionAnswer => ({
  sheetId: state.sheet.id,
  revisionId: state.revision.id,
  status,
  version: state.revision.version,
  label,
})

async function setStatus(tx: Transaction, revisionId: number, values: Partial<typeof sheetRevisions.$inferInsert>) {
  await tx.update(sheetRevisions).set(values).where(eq(sheetRevisions.id, revisionId))
}

/** POST /api/sheets/[id]/submit */
export async function submitSheet(db: Database, sheetId: number, body: VersionBody, viewer: Viewer, context: AuditContext, links: Links) {
  return transition(db, context, sheetId, viewer, {
    action: 'submit',
    version: body.version,
    work: async (tx, state) => {
      await setStatus(tx, state.revision.id, { status: 'in check', submittedAt: new Date() })
      const name = await printedNameOf(tx, viewer.id)
      const checkers = await checkersOf(tx, state.sheet.projectId, [state.revision.preparedBy, ...state.facts.editors])
      const mails: QueuedMail[] = checkers.map((checker) => ({
        kind: 'sheet.submitted',
        to: checker.email,
        subject: `For check: ${state.sheet.number} ${state.sheet.title}`,
        text: `${checker.name},\n\n${name} submitted sheet ${state.sheet.number} “${state.sheet.title}” for check.\n\nOpen it: ${sheetLink(links, sheetId)}\n`,
      }))
      await queueMail(tx, ...mails)
      await recordAuditEvent(tx, context, {
        action: 'sheet.submitted',
        subjectType: 'sheet',
        subjectId: sheetId,
        detail: { revisionId: state.revision.id, version: state.revision.version, contentHash: state.hash, notified: checkers.length },
      })
      return answerOf(state, 'in check')
    },
  })
}

/** POST /api/sheets/[id]/return */
export async function returnSheet(db: Database, sheetId: number, body: ReturnBody, viewer: Viewer, context: AuditContext, links: Links) {
  return transition(db, context, sheetId, viewer, {
    action: 'return',
    version: body.version,
    work: async (tx, state) => {
      await setStatus(tx, state.revision.id, { status: 'returned' })
      const name = await printedNameOf(tx, viewer.id)
      const preparer = await emailOf(tx, state.revision.preparedBy)
      if (preparer) {
        await queueMail(tx, {
          kind: 'sheet.returned',
          to: preparer.email,
          subject: `Returned: ${state.sheet.number} ${state.sheet.title}`,
          text: `${preparer.name},\n\n${name} returned sheet ${state.sheet.number} “${state.sheet.title}” to you.${body.reason ? `\n\n${body.reason}` : ''}\n\nOpen it: ${sheetLink(links, sheetId)}\n`,
        })
      }
      await recordAuditEvent(tx, context, { action: 'sheet.returned', subjectType: 'sheet', subjectId: sheetId, detail: { revisionId: state.revision.id, version: state.revision.version, reason: body.reason } })
      return answerOf(state, 'returned')
    },
  })
}

/**
 * Whether `viewer` may take `action` as the sheet stands (read without locks): the password of a signature is
 * checked only then, so a refusal for role or state is answered as such and never counts as a wrong password.
 */
async function mayAct(db: Database, sheetId: number, viewer: Viewer, action: LifecycleAction, version: number): Promise<boolean> {
  const state = await loadState(db, sheetId, false)
  if (!state) return false
  const person = { ...viewer, projectRoles: await projectRolesOf(db, state.sheet.projectId, viewer.id) }
  return canDo(person, state.facts)[action].allowed && state.revision.version === version
}

/** POST /api/sheets/[id]/approve: the checker's signature over exactly the stored content at `version`. */
export async function approveSheet(db: Database, sheetId: number, body: ApproveBody, viewer: Viewer, context: AuditContext, links: Links, signing: Signing) {
  const passwordChecked = await mayAct(db, sheetId, viewer, 'approve', body.version)
  if (passwordChecked) {
    const wrong = await checkPassword(db, viewer, body.password, signing)
    if (wrong) return { ...wrong, detail: { ...wrong.detail, sheetId, action: 'approve' } }
  }
  return transition(db, context, sheetId, viewer, {
    action: 'approve',
    version: body.version,
    work: async (tx, state) => {
      // The sheet came into check between the first read and the locks: the password was never checked.
      if (!passwordChecked) throw createError({ statusCode: 409, statusMessage: 'This sheet changed since you loaded it: read it again before you act' })
      const signedAt = new Date()
      const printedName = await printedNameOf(tx, viewer.id)
      await tx.insert(signatures).values({
        revisionId: state.revision.id,
        personId: viewer.id,
        printedName,
        role: 'checker',
        meaning: 'checked and approved',
        signedAt,
        contentHash: state.hash,
        engineVersion: state.revision.engineVersion,
      })
      await setStatus(tx, state.revision.id, { status: 'approved', approvedAt: signedAt })
      const preparer = await emailOf(tx, state.revision.preparedBy)
      if (preparer) {
        await queueMail(tx, {
          kind: 'sheet.approved',
          to: preparer.email,
          subject: `Approved: ${state.sheet.number} ${state.sheet.title}`,
          text: `${preparer.name},\n\n${printedName} checked and approved sheet ${state.sheet.number} “${state.sheet.title}”. It can now be issued.\n\nOpen it: ${sheetLink(links, sheetId)}\n`,
        })
      }
      await recordAuditEvent(tx, context, {
        action: 'sheet.approved',
        subjectType: 'sheet',
        subjectId: sheetId,
        detail: { revisionId: state.revision.id, version: state.revision.version, contentHash: state.hash, engineVersion: state.revision.engineVersion },
      })
      return answerOf(state, 'approved')
    },
  })
}

/** Labels of the sheet's earlier issues, for the firm's rule. */
async function earlierLabels(db: Executor, sheetId: number) {
  const rows = await db
    .select({ label: sheetRevisions.label })
    .from(sheetRevisions)
    .where(and(eq(sheetRevisions.sheetId, sheetId), isNotNull(sheetRevisions.label)))
  return rows.map((row) => ({ label: row.label! }))
}

/**
 * Writes the issue of one revision inside `tx`, which holds its locks: the issuer's signature, the PDF and its
 * SHA-256, the label and purpose, the earlier issued revision superseded, the client contacts' e-mail.
 */
async function writeIssue(
  tx: Transaction,
  state: State,
  issue: { label: string; purpose: IssuePurpose; issuedAt: Date; issuer: Viewer; issuerName: string },
  pdf: { bytes: Buffer; sha256: string; fileName: string; pages: number },
  /** The single sheet's issue job that writes it (a package's issue names its job in package_issues instead). */
  jobId: number | null = null,
) {
  await tx.insert(revisionPdfs).values({ revisionId: state.revision.id, bytes: pdf.bytes, sha256: pdf.sha256, fileName: pdf.fileName, pages: pdf.pages, jobId })
  await tx.insert(signatures).values({
    revisionId: state.revision.id,
    personId: issue.issuer.id,
    printedName: issue.issuerName,
    role: 'engineer',
    meaning: 'issued',
    signedAt: issue.issuedAt,
    contentHash: state.hash,
    engineVersion: state.revision.engineVersion,
  })
  // The earlier issued revision first: the trigger lets an issued revision change its status to superseded only.
  const superseded = await tx
    .update(sheetRevisions)
    .set({ status: 'superseded', supersededAt: issue.issuedAt })
    .where(and(eq(sheetRevisions.sheetId, state.sheet.id), eq(sheetRevisions.status, 'issued')))
    .returning({ id: sheetRevisions.id })
  await setStatus(tx, state.revision.id, { status: 'issued', label: issue.label, purpose: issue.purpose, issuedAt: issue.issuedAt, issuedBy: issue.issuer.id })
  return superseded.map((row) => row.id)
}

async function clientMails(tx: Executor, projectId: number, what: string, links: Array<{ title: string; url: string }>, purpose: IssuePurpose): Promise<QueuedMail[]> {
  const contacts = await clientContactsOf(tx, projectId)
  const list = links.map((link) => `${link.title}\n  ${link.url}`).join('\n')
  return contacts.map((contact) => ({
    kind: 'sheet.issued',
    to: contact.email,
    subject: `Issued ${issuePurposeNames[purpose].toLowerCase()}: ${what}`,
    text: `${contact.name},\n\n${what} has been issued to you ${issuePurposeNames[purpose].toLowerCase()}.\n\n${list}\n\nSign in to download the document and acknowledge receipt.\n`,
  }))
}

// ---------------------------------------------------------------------------------------------------------------
// Issuing one sheet
//
// POST /api/sheets/[id]/issue answers at once what a person is answered at once: who may issue, the password, the
// version and the state, checked under the sheet's locks as every transition is (403, 409, 429); then a job is queued
// in that transaction with its audit row (`sheet.issue-requested`) and the answer is 202 { jobId }. The job
// (runSheetIssue, registered by server/plugins/issue-jobs.ts, claimed by whichever app server is free) renders the
// PDF with no locks held, with the label the firm's rule gives then, and issues in ONE transaction under the locks
// that reads the state, the version and the label again: anything changed meanwhile fails the job with the reason
// (audited `sheet.issue-refused`), so what is stored is what was rendered. A job retried after its runner died renders
// afresh; one whose issue had committed finds its PDF by its job id (revision_pdfs.job_id) and answers that issue.

export const SHEET_ISSUE_JOB = 'sheet.issue'

export interface SheetIssueJob {
  sheetId: number
  /** The revision and version the person saw: the job issues exactly that, or nothing. */
  revisionId: number
  version: number
  purpose: IssuePurpose
  issuerId: number
  context: AuditContext
  siteUrl: string
}

/**
 * The id of a job waiting or running that issues one of `sheetIds`: a sheet's own issue, or a package's issue that
 * names it. Of two issues of one sheet at once the second is refused while the first is in hand; the transaction
 * that issues checks the states again in any case, so a race between a sheet's and its package's request (which
 * lock different rows) ends with one of the two jobs refused, never a sheet issued twice.
 */
async function issueJobFor(executor: Executor, sheetIds: number[]): Promise<number | null> {
  const ids = sql.join(sheetIds.map((id) => sql`${id}`), sql`, `)
  const [busy] = await executor.execute<{ id: number }>(sql`
    select id from jobs where status in ('waiting', 'running') and (
      (kind = ${SHEET_ISSUE_JOB} and (payload->>'sheetId')::int in (${ids}))
      or (kind = ${PACKAGE_ISSUE_JOB} and exists (
        select 1 from jsonb_array_elements(payload->'sheets') as named where (named->>'sheetId')::int in (${ids}))))
    order by id limit 1`)
  return busy ? Number(busy.id) : null
}

/** POST /api/sheets/[id]/issue: the checks a person is answered at once, then the job that renders and issues. */
export async function requestSheetIssue(db: Database, sheetId: number, body: IssueBody, viewer: Viewer, context: AuditContext, links: Links, signing: Signing): Promise<IssueQueued | Refused> {
  const passwordChecked = await mayAct(db, sheetId, viewer, 'issue', body.version)
  if (passwordChecked) {
    const wrong = await checkPassword(db, viewer, body.password, signing)
    if (wrong) return { ...wrong, detail: { ...wrong.detail, sheetId, action: 'issue' } }
  }
  return transition(db, context, sheetId, viewer, {
    action: 'issue',
    version: body.version,
    work: async (tx, state) => {
      // The sheet became issuable between the first read and the locks: the password was never checked.
      if (!passwordChecked) throw new StepConflict('This sheet changed since you loaded it: read it again before you act')
      // Under the sheet's row lock, so of two requests at once the second sees the first one's job.
      const busy = await issueJobFor(tx, [sheetId])
      if (busy !== null) throw new StepConflict(`This sheet is being issued already (job ${busy})`)
      const payload: SheetIssueJob = { sheetId, revisionId: state.revision.id, version: state.revision.version, purpose: body.purpose, issuerId: viewer.id, context, siteUrl: links.siteUrl }
      const jobId = await enqueueJob(tx, SHEET_ISSUE_JOB, payload, viewer.id)
      await recordAuditEvent(tx, context, {
        action: 'sheet.issue-requested',
        subjectType: 'sheet',
        subjectId: sheetId,
        detail: { jobId, revisionId: state.revision.id, version: state.revision.version, purpose: body.purpose },
      })
      return { jobId }
    },
  })
}

/** The issue a sheet issue job made, found by the job id its PDF was stored with; null while it has made none. */
async function issueOfJob(db: Executor, jobId: number): Promise<SheetIssueAnswer | null> {
  const [done] = await db
    .select({ sheetId: sheetRevisions.sheetId, revisionId: sheetRevisions.id, status: sheetRevisions.status, version: sheetRevisions.version, label: sheetRevisions.label })
    .from(revisionPdfs)
    .innerJoin(sheetRevisions, eq(sheetRevisions.id, revisionPdfs.revisionId))
    .where(eq(revisionPdfs.jobId, jobId))
  return done ? { ...done, status: done.status as SheetStatus } : null
}

/** The job of one sheet's issue: render its PDF (no locks held), then issue under the locks, or fail saying why. */
export async function runSheetIssue(db: Database, job: SheetIssueJob, run: JobContext, renderer: Pick<PdfRenderer, 'renderSheetPdf'>): Promise<SheetIssueAnswer> {
  const done = await issueOfJob(db, run.jobId)
  if (done) return done
  const { sheetId, context } = job
  const [issuer] = await db.select({ roles: people.roles, active: people.active, name: people.name }).from(people).where(eq(people.id, job.issuerId))
  if (!issuer?.active) throw new JobFailure('The person who asked for this issue can no longer issue', false)
  const viewer: Viewer = { id: job.issuerId, roles: issuer.roles as Role[] }
  const before = await loadState(db, sheetId, false)
  if (!before) throw new JobFailure(`There is no sheet ${sheetId}`, false)
  const number = before.sheet.number
  const refuse = async (reason: string): Promise<never> => {
    await recordAuditEvent(db, context, { action: 'sheet.issue-refused', subjectType: 'sheet', subjectId: sheetId, status: 409, detail: { reason, version: job.version, jobId: run.jobId } })
    throw new JobFailure(`Sheet ${number} was not issued: ${reason}`, false)
  }
  // Only the revision the person saw, and only while they may issue it, is rendered; the locks below check again.
  const person = { ...viewer, projectRoles: await projectRolesOf(db, before.sheet.projectId, viewer.id) }
  if (before.revision.id !== job.revisionId || before.revision.version !== job.version) return refuse('This sheet changed since you loaded it: read it again before you act')
  const permission = canDo(person, before.facts).issue
  if (!permission.allowed) return refuse(permission.reason)
  const firm = await readFirmSettings(db)
  const label = nextRevisionLabel(firm.revisionLabelRule, await earlierLabels(db, sheetId), job.purpose)
  const issuedAt = new Date()
  await run.progress({ done: 0, total: 1, what: `printing ${number} revision ${label}` })
  let pdf: Awaited<ReturnType<PdfRenderer['renderSheetPdf']>>
  try {
    pdf = await renderer.renderSheetPdf(before.revision.id, { issue: { label, purpose: job.purpose, issuedBy: issuer.name, issuedAt: issuedAt.toISOString() } })
  } catch (error) {
    throw new JobFailure(`Sheet ${number} could not be printed: ${error instanceof Error ? error.message : String(error)}`)
  }
  if (run.signal.aborted) throw new Error('The render was stopped before it finished')
  const links: Links = { siteUrl: job.siteUrl }
  const outcome = await lockedStep(db, sheetId, viewer, {
    action: 'issue',
    version: job.version,
    work: async (tx, state) => {
      const labelNow = nextRevisionLabel((await readFirmSettings(tx)).revisionLabelRule, await earlierLabels(tx, sheetId), job.purpose)
      if (state.revision.id !== before.revision.id || labelNow !== label) throw new StepConflict('This sheet changed while its PDF was made: issue it again')
      const superseded = await writeIssue(tx, state, { label, purpose: job.purpose, issuedAt, issuer: viewer, issuerName: issuer.name }, pdf, run.jobId)
      const mails = await clientMails(tx, state.sheet.projectId, `sheet ${state.sheet.number} “${state.sheet.title}”, revision ${label}`, [
        { title: `${state.sheet.number} revision ${label}`, url: documentLink(links, state.revision.id) },
      ], job.purpose)
      await queueMail(tx, ...mails)
      await recordAuditEvent(tx, context, {
        action: 'sheet.issued',
        subjectType: 'sheet',
        subjectId: sheetId,
        detail: { revisionId: state.revision.id, label, purpose: job.purpose, contentHash: state.hash, pdfSha256: pdf.sha256, superseded, notified: mails.length, jobId: run.jobId },
      })
      return answerOf(state, 'issued', label)
    },
  })
  if (outcome.kind !== 'done') {
    // An attempt of this job that lost its lease while it rendered may have issued the sheet meanwhile: that issue
    // is this job's answer, not a refusal.
    const meanwhile = await issueOfJob(db, run.jobId)
    if (meanwhile) return meanwhile
    return refuse(outcome.kind === 'refused' ? outcome.refusal.refused : outcome.reason)
  }
  await run.progress({ done: 1, total: 1, what: 'issued' })
  return outcome.value
}

/** POST /api/sheets/[id]/revise: the next revision, a draft prepared by the reviser, its content copied. */
export async function reviseSheet(db: Database, sheetId: number, body: VersionBody, viewer: Viewer, context: AuditContext) {
  return transition(db, context, sheetId, viewer, {
    action: 'revise',
    version: body.version,
    work: async (tx, state) => {
      const [created] = await tx
        .insert(sheetRevisions)
        .values({
          sheetId,
          revisionIndex: state.revision.revisionIndex + 1,
          status: 'draft',
          document: state.revision.document as SheetDocument,
          version: 1,
          result: state.revision.result,
          engineVersion: state.revision.engineVersion,
          preparedBy: viewer.id,
          editedBy: viewer.id,
        })
        .returning({ id: sheetRevisions.id })
      await tx.insert(revisionEditors).values({ revisionId: created!.id, personId: viewer.id })
      // The references' files go with the content: the new draft lists the same stored objects (never rewritten),
      // and removing one from the draft leaves the object while an earlier revision still names it.
      await tx.execute(sql`
        insert into attachments (revision_id, name, size, sha256, type, object_key, uploaded_by, uploaded_at)
        select ${created!.id}, name, size, sha256, type, object_key, uploaded_by, uploaded_at
        from attachments where revision_id = ${state.revision.id} order by id`)
      await recordAuditEvent(tx, context, {
        action: 'sheet.revised',
        subjectType: 'sheet',
        subjectId: sheetId,
        detail: { fromRevisionId: state.revision.id, fromStatus: state.facts.status, revisionId: created!.id, revisionIndex: state.revision.revisionIndex + 1 },
      })
      return { sheetId, revisionId: created!.id, status: 'draft' as const, version: 1, label: null }
    },
  })
}

// ---------------------------------------------------------------------------------------------------------------
// Packages
//
// POST /api/packages/[id]/issue answers at once: who may issue, the password and the package's state are checked
// in the request (403/409 with the reason), and a job is queued in the same transaction as its audit row. The job
// (runPackageIssue, registered by server/plugins/issue-jobs.ts) renders every sheet and the cover, then issues
// everything in ONE transaction that checks the states and versions again: every sheet, or nothing. A job retried
// after its runner died renders afresh; one whose issue had committed finds it by its job id and answers it.

export const PACKAGE_ISSUE_JOB = 'package.issue'

export interface PackageIssueJob {
  packageId: number
  purpose: IssuePurpose
  issuerId: number
  sheets: PackageIssueBody['sheets']
  context: AuditContext
  siteUrl: string
}

/** The package's sheets in its order, with their states (locked in id order when `lock`), or the reason none can issue. */
async function packagePlan(executor: Executor, packageId: number, body: Pick<PackageIssueBody, 'sheets' | 'purpose'>, person: PersonOnProject, lock: boolean) {
  const members = await executor.select({ id: sheets.id }).from(sheets).where(eq(sheets.packageId, packageId)).orderBy(asc(sql`length(${sheets.number})`), asc(sheets.number))
  const named = new Map(body.sheets.map((sheet) => [sheet.sheetId, sheet.version]))
  if (members.length !== named.size || members.some((member) => !named.has(member.id))) return { problem: 'The package’s sheets changed since you loaded it' } as const
  const states: State[] = []
  // Sheets locked in id order, so two issues of overlapping sheets take their locks in one order.
  for (const id of [...members.map((member) => member.id)].sort((a, b) => a - b)) states.push((await loadState(executor, id, lock))!)
  const ordered = members.map((member) => states.find((state) => state.sheet.id === member.id)!)
  const stale = ordered.filter((state) => state.revision.version !== named.get(state.sheet.id)).map((state) => state.sheet.number)
  if (stale.length) return { problem: `Changed since you loaded them: ${stale.join(', ')}` } as const
  const waiting = ordered.filter((state) => !canDo(person, state.facts).issue.allowed && state.facts.status !== 'issued')
  if (waiting.length) return { problem: `Every sheet must be approved first: ${waiting.map((state) => `${state.sheet.number} (${state.facts.status})`).join(', ')}` } as const
  const fresh = ordered.filter((state) => state.facts.status === 'approved')
  if (fresh.length === 0) return { problem: 'Every sheet of this package is already issued at its current revision' } as const
  const firm = await readFirmSettings(executor)
  const labels = new Map<number, string>()
  for (const state of fresh) labels.set(state.sheet.id, nextRevisionLabel(firm.revisionLabelRule, await earlierLabels(executor, state.sheet.id), body.purpose))
  const earlierIssues = await executor.select({ label: packageIssues.label }).from(packageIssues).where(and(eq(packageIssues.packageId, packageId), isNotNull(packageIssues.label)))
  const packageLabel = nextRevisionLabel(firm.revisionLabelRule, earlierIssues.map((row) => ({ label: row.label! })), body.purpose)
  return { ordered, fresh, labels, packageLabel, firm } as const
}

async function packageConflict(db: Database, context: AuditContext, packageId: number, reason: string): Promise<never> {
  await recordAuditEvent(db, context, { action: 'package.issue-refused', subjectType: 'package', subjectId: packageId, status: 409, detail: { reason } })
  throw createError({ statusCode: 409, statusMessage: reason, data: { reason } })
}

/** POST /api/packages/[id]/issue: the checks a person is answered at once, then the job that renders and issues. */
export async function requestPackageIssue(db: Database, packageId: number, body: PackageIssueBody, viewer: Viewer, context: AuditContext, links: Links, signing: Signing): Promise<PackageIssueQueued | Refused> {
  const [found] = await db.select({ id: packages.id, projectId: packages.projectId }).from(packages).where(eq(packages.id, packageId))
  if (!found) throw createError({ statusCode: 404, statusMessage: 'No such package' })
  const person = { ...viewer, projectRoles: await projectRolesOf(db, found.projectId, viewer.id) }
  if (!holds(person, 'engineer')) return refused('Only an engineer of this project issues its packages', { packageId })
  const wrong = await checkPassword(db, viewer, body.password, signing)
  if (wrong) return { ...wrong, detail: { ...wrong.detail, packageId, action: 'issue' } }
  const plan = await packagePlan(db, packageId, body, person, false)
  if ('problem' in plan) return packageConflict(db, context, packageId, plan.problem!)
  const payload: PackageIssueJob = { packageId, purpose: body.purpose, issuerId: viewer.id, sheets: body.sheets, context, siteUrl: links.siteUrl }
  const queued = await db.transaction(async (tx) => {
    // Under the package's row lock, so of two requests at once the second sees the first one's job.
    await tx.select({ id: packages.id }).from(packages).where(eq(packages.id, packageId)).for('update')
    const [busy] = await tx.execute<{ id: number }>(sql`select id from jobs where kind = ${PACKAGE_ISSUE_JOB} and status in ('waiting', 'running') and (payload->>'packageId')::int = ${packageId} limit 1`)
    if (busy) return { problem: `This package is being issued already (job ${busy.id})` }
    // A sheet of it being issued on its own (its job's final transaction would refuse one of the two anyway).
    const sheetJob = await issueJobFor(tx, body.sheets.map((sheet) => sheet.sheetId))
    if (sheetJob !== null) return { problem: `A sheet of this package is being issued already (job ${sheetJob})` }
    const jobId = await enqueueJob(tx, PACKAGE_ISSUE_JOB, payload, viewer.id)
    await recordAuditEvent(tx, context, { action: 'package.issue-requested', subjectType: 'package', subjectId: packageId, detail: { jobId, purpose: body.purpose, sheets: body.sheets } })
    return { jobId }
  })
  if ('problem' in queued) return packageConflict(db, context, packageId, queued.problem!)
  return queued
}

async function answerOfIssue(db: Executor, packageIssueId: number): Promise<PackageIssueAnswer> {
  const [row] = await db.select().from(packageIssues).where(eq(packageIssues.id, packageIssueId))
  const issued = await db
    .select({ sheetId: sheetRevisions.sheetId, revisionId: sheetRevisions.id, label: sheetRevisions.label })
    .from(sheetRevisions)
    .where(and(inArray(sheetRevisions.id, row!.revisionIds), eq(sheetRevisions.issuedAt, row!.issuedAt)))
  // In the package's order, as the issue listed them.
  issued.sort((a, b) => row!.revisionIds.indexOf(a.revisionId) - row!.revisionIds.indexOf(b.revisionId))
  return { packageIssueId, label: row!.label ?? '', pages: row!.pages ?? 0, issued: issued.map((sheet) => ({ ...sheet, label: sheet.label! })), sha256: row!.sha256, fileName: row!.fileName }
}

/** The job of a package issue: render every sheet (progress "sheet k of n: NUMBER"), the cover, then issue at once. */
export async function runPackageIssue(db: Database, job: PackageIssueJob, run: JobContext, renderers: PdfRenderer): Promise<PackageIssueAnswer> {
  const [done] = await db.select({ id: packageIssues.id }).from(packageIssues).where(eq(packageIssues.jobId, run.jobId))
  if (done) return answerOfIssue(db, done.id)
  const { packageId, context } = job
  const [found] = await db
    .select({ projectId: packages.projectId, number: packages.number, title: packages.title, projectNumber: projects.number, projectName: projects.name, organisationId: projects.organisationId })
    .from(packages)
    .innerJoin(projects, eq(projects.id, packages.projectId))
    .where(eq(packages.id, packageId))
  if (!found) throw new JobFailure(`There is no package ${packageId}`, false)
  const [issuer] = await db.select({ roles: people.roles, active: people.active, name: people.name }).from(people).where(eq(people.id, job.issuerId))
  if (!issuer?.active) throw new JobFailure('The person who asked for this issue can no longer issue', false)
  const viewer: Viewer = { id: job.issuerId, roles: issuer.roles as Role[] }
  const person = { ...viewer, projectRoles: await projectRolesOf(db, found.projectId, viewer.id) }
  const refuse = async (reason: string): Promise<never> => {
    await recordAuditEvent(db, context, { action: 'package.issue-refused', subjectType: 'package', subjectId: packageId, status: 409, detail: { reason, jobId: run.jobId } })
    throw new JobFailure(reason, false)
  }
  if (!holds(person, 'engineer')) return refuse('Only an engineer of this project issues its packages')
  const first = await packagePlan(db, packageId, job, person, false)
  if ('problem' in first) return refuse(first.problem!)

  const issuedAt = new Date()
  const stamp = (label: string) => ({ label, purpose: job.purpose, issuedBy: issuer.name, issuedAt: issuedAt.toISOString() })
  const total = first.ordered.length
  const pdfs = new Map<number, RenderedPdf>()
  // Each sheet is merged into the package's PDF as it comes, while the next one prints.
  const assembly = renderers.assemblePackagePdf(packageId, total)
  // One sheet more at once than the renderer has tabs: each lane takes the next sheet, and the app's own part of one
  // (its data, the PDF's metadata) is done while another prints. On a failure no lane starts another, and the
  // failure of the first failed sheet in the package's order is the job's error.
  let next = 0
  let finished = 0
  const failures = new Map<number, Error>()
  const renderOne = async (index: number) => {
    const state = first.ordered[index]!
    await run.progress({ done: finished, total, what: `sheet ${index + 1} of ${total}: ${state.sheet.number}` })
    const label = first.labels.get(state.sheet.id)
    let bytes: Uint8Array
    if (label !== undefined) {
      try {
        const pdf = await renderers.renderSheetPdf(state.revision.id, { issue: stamp(label) })
        pdfs.set(state.revision.id, pdf)
        bytes = pdf.bytes
      } catch (error) {
        throw new JobFailure(`Sheet ${index + 1} of ${total}, ${state.sheet.number}, could not be printed: ${error instanceof Error ? error.message : String(error)}`)
      }
    } else {
      const [stored] = await db.select({ bytes: revisionPdfs.bytes }).from(revisionPdfs).where(eq(revisionPdfs.revisionId, state.revision.id))
      if (!stored) throw new JobFailure(`Sheet ${state.sheet.number} is issued but has no stored PDF`, false)
      bytes = stored.bytes
    }
    const part: PackagePart = { number: state.sheet.number, title: state.sheet.title, loopTag: state.sheet.loopTag, label: label ?? state.revision.label ?? '', newInPackage: label !== undefined, bytes }
    try {
      await assembly.add(index, part)
    } catch (error) {
      throw new JobFailure(`Sheet ${index + 1} of ${total}, ${state.sheet.number}, could not be merged into the package: ${error instanceof Error ? error.message : String(error)}`)
    }
    finished++
  }
  const lane = async () => {
    while (next < total && failures.size === 0 && !run.signal.aborted) {
      const index = next++
      await renderOne(index).catch((error: unknown) => failures.set(index, error instanceof Error ? error : new Error(String(error))))
    }
  }
  await Promise.all(Array.from({ length: Math.min(renderTabs + 1, total) }, lane))
  if (failures.size) throw failures.get(Math.min(...failures.keys()))!
  if (run.signal.aborted) throw new Error('The render was stopped before it finished')
  await run.progress({ done: total, total, what: 'the cover sheet and the package page numbers' })
  const [client] = await db.select({ name: organisations.name }).from(organisations).where(eq(organisations.id, found.organisationId))
  const recipients = await clientContactsOf(db, found.projectId)
  const facts: CoverFacts = {
    firm: { name: first.firm.name, paperSize: first.firm.paperSize },
    projectNumber: found.projectNumber,
    projectName: found.projectName,
    clientName: client?.name ?? '',
    packageNumber: found.number,
    packageTitle: found.title,
    label: first.packageLabel,
    purpose: job.purpose,
    issuedBy: issuer.name,
    issuedAt: issuedAt.toISOString(),
    recipients: recipients.map((recipient) => ({ name: recipient.name, email: recipient.email })),
  }
  let packagePdf: RenderedPdf
  try {
    packagePdf = await assembly.finish(facts)
  } catch (error) {
    throw new JobFailure(`The cover sheet of package ${found.number} could not be printed: ${error instanceof Error ? error.message : String(error)}`)
  }
  if (run.signal.aborted) throw new Error('The render was stopped before it finished')
  const revisionIds = first.ordered.map((state) => state.revision.id)
  const links: Links = { siteUrl: job.siteUrl }

  const outcome = await db.transaction(async (tx) => {
    await tx.select({ id: packages.id }).from(packages).where(eq(packages.id, packageId)).for('update')
    const locked = await packagePlan(tx, packageId, job, person, true)
    if ('problem' in locked) return { problem: locked.problem! }
    const same =
      locked.packageLabel === first.packageLabel &&
      locked.ordered.map((state) => state.revision.id).join() === revisionIds.join() &&
      locked.fresh.every((state) => locked.labels.get(state.sheet.id) === first.labels.get(state.sheet.id) && pdfs.has(state.revision.id))
    if (!same) return { problem: 'The package changed while its PDFs were made: issue it again' }
    const issued: PackageIssueAnswer['issued'] = []
    for (const state of locked.fresh) {
      const label = locked.labels.get(state.sheet.id)!
      await writeIssue(tx, state, { label, purpose: job.purpose, issuedAt, issuer: viewer, issuerName: issuer.name }, pdfs.get(state.revision.id)!)
      issued.push({ sheetId: state.sheet.id, revisionId: state.revision.id, label })
      await recordAuditEvent(tx, context, {
        action: 'sheet.issued',
        subjectType: 'sheet',
        subjectId: state.sheet.id,
        detail: { revisionId: state.revision.id, label, purpose: job.purpose, contentHash: state.hash, pdfSha256: pdfs.get(state.revision.id)!.sha256, packageId, jobId: run.jobId },
      })
    }
    const [row] = await tx
      .insert(packageIssues)
      .values({ packageId, purpose: job.purpose, issuedBy: viewer.id, issuedAt, revisionIds, bytes: packagePdf.bytes, sha256: packagePdf.sha256, fileName: packagePdf.fileName, pages: packagePdf.pages, label: first.packageLabel, jobId: run.jobId })
      .returning({ id: packageIssues.id })
    const mails = await clientMails(tx, found.projectId, `package ${found.number} “${found.title}”, revision ${first.packageLabel}`, issued.map((sheet) => ({ title: `revision ${sheet.label}`, url: documentLink(links, sheet.revisionId) })), job.purpose)
    await queueMail(tx, ...mails)
    await recordAuditEvent(tx, context, {
      action: 'package.issued',
      subjectType: 'package',
      subjectId: packageId,
      detail: { packageIssueId: row!.id, label: first.packageLabel, purpose: job.purpose, revisionIds, issued, pdfSha256: packagePdf.sha256, pages: packagePdf.pages, notified: mails.length, jobId: run.jobId },
    })
    return { value: { packageIssueId: row!.id, label: first.packageLabel, pages: packagePdf.pages, issued, sha256: packagePdf.sha256, fileName: packagePdf.fileName } }
  })
  if ('problem' in outcome) {
    // An attempt of this job that lost its lease while it rendered may have issued the package meanwhile: that
    // issue is this job's answer, not a refusal (as for a sheet's issue job).
    const [meanwhile] = await db.select({ id: packageIssues.id }).from(packageIssues).where(eq(packageIssues.jobId, run.jobId))
    if (meanwhile) return answerOfIssue(db, meanwhile.id)
    return refuse(outcome.problem!)
  }
  await run.progress({ done: total, total, what: 'issued' })
  return outcome.value
}

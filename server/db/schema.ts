// Drizzle tables of Loopwright. Migrations are generated from this file into drizzle/
// with `npx drizzle-kit generate`; the audit trail's append-only trigger is a custom migration.
import { sql } from 'drizzle-orm'
import {
  bigint,
  bigserial,
  boolean,
  check,
  customType,
  index,
  integer,
  jsonb,
  pgTable,
  primaryKey,
  serial,
  text,
  timestamp,
  uniqueIndex,
} from 'drizzle-orm/pg-core'

const createdAt = () => timestamp('created_at', { withTimezone: true }).notNull().defaultNow()

/** The firm's own settings: exactly one row (id = 1). */
export const firmSettings = pgTable(
  'firm_settings',
  {
    id: integer('id').primaryKey().default(1),
    name: text('name').notNull(),
    sheetNumbering: text('sheet_numbering').notNull(),
    paperSize: text('paper_size').notNull(),
    defaultCautions: text('default_cautions').array().notNull().default(sql`'{}'::text[]`),
    // flow: how issued revisions are labelled (shared/schemas/firm.ts, revisionLabelRules).
    revisionLabelRule: text('revision_label_rule').notNull().default('letters-then-numbers'),
    updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (table) => [
    check('firm_settings_single_row', sql`${table.id} = 1`),
    check('firm_settings_paper_size', sql`${table.paperSize} in ('A4', 'Letter', 'A3')`),
    check('firm_settings_revision_label_rule', sql`${table.revisionLabelRule} in ('letters-then-numbers', 'letters', 'numbers')`),
  ],
)

/** Client organisations: the firm's clients (the firm itself lives in firm_settings). */
export const organisations = pgTable('organisations', {
  id: serial('id').primaryKey(),
  name: text('name').notNull().unique(),
  createdAt: createdAt(),
})

/** Everyone who signs in. `passwordHash` is null until an invitation is accepted. */
export const people = pgTable(
  'people',
  {
    id: serial('id').primaryKey(),
    name: text('name').notNull(),
    email: text('email').notNull().unique(),
    passwordHash: text('password_hash'),
    roles: text('roles').array().notNull().default(sql`'{}'::text[]`),
    active: boolean('active').notNull().default(true),
    organisationId: integer('organisation_id').references(() => organisations.id),
    createdAt: createdAt(),
  },
  (table) => [
    check('people_roles_known', sql`${table.roles} <@ array['admin', 'engineer', 'checker', 'client']::text[]`),
    check('people_email_lower', sql`${table.email} = lower(${table.email})`),
  ],
)

export const projects = pgTable('projects', {
  id: serial('id').primaryKey(),
  number: text('number').notNull().unique(),
  name: text('name').notNull(),
  organisationId: integer('organisation_id')
    .notNull()
    .references(() => organisations.id),
  createdAt: createdAt(),
})

/** A person's role on one project; one person may hold several roles on the same project. */
export const projectMembers = pgTable(
  'project_members',
  {
    projectId: integer('project_id')
      .notNull()
      .references(() => projects.id, { onDelete: 'cascade' }),
    personId: integer('person_id')
      .notNull()
      .references(() => people.id),
    role: text('role').notNull(),
    createdAt: createdAt(),
  },
  (table) => [
    primaryKey({ columns: [table.projectId, table.personId, table.role] }),
    check('project_members_role_known', sql`${table.role} in ('engineer', 'checker', 'client')`),
  ],
)

/** One-time invitation links. Only the SHA-256 of the token is stored. */
export const invitations = pgTable('invitations', {
  id: serial('id').primaryKey(),
  personId: integer('person_id')
    .notNull()
    .references(() => people.id),
  tokenHash: text('token_hash').notNull().unique(),
  expiresAt: timestamp('expires_at', { withTimezone: true }).notNull(),
  usedAt: timestamp('used_at', { withTimezone: true }),
  invitedBy: integer('invited_by').references(() => people.id),
  createdAt: createdAt(),
})

/**
 * One row per sign-in: the session the sealed cookie names. Only the SHA-256 of the random session id is
 * stored (the id itself lives in the cookie's `secure` part). A session ends when it is revoked, after the
 * idle timeout since `lastSeenAt`, or at `expiresAt` (server/services/sessions.ts).
 */
export const sessions = pgTable(
  'sessions',
  {
    id: bigserial('id', { mode: 'number' }).primaryKey(),
    tokenHash: text('token_hash').notNull().unique(),
    personId: integer('person_id')
      .notNull()
      .references(() => people.id),
    createdAt: createdAt(),
    lastSeenAt: timestamp('last_seen_at', { withTimezone: true }).notNull().defaultNow(),
    expiresAt: timestamp('expires_at', { withTimezone: true }).notNull(),
    revokedAt: timestamp('revoked_at', { withTimezone: true }),
    revokedReason: text('revoked_reason'),
    ip: text('ip'),
  },
  (table) => [index('sessions_person_live').on(table.personId).where(sql`${table.revokedAt} is null`)],
)

/** Every sign-in attempt, counted per e-mail address and client address for the rate limits. */
export const loginAttempts = pgTable(
  'login_attempts',
  {
    id: bigserial('id', { mode: 'number' }).primaryKey(),
    email: text('email').notNull(),
    personId: integer('person_id').references(() => people.id),
    succeeded: boolean('succeeded').notNull(),
    ip: text('ip'),
    at: timestamp('at', { withTimezone: true }).notNull().defaultNow(),
  },
  (table) => [index('login_attempts_email_at').on(table.email, table.at), index('login_attempts_ip_at').on(table.ip, table.at)],
)

/** The audit trail. Append-only: a trigger (drizzle/…_audit_append_only.sql) refuses UPDATE, DELETE and TRUNCATE. */
export const auditEvents = pgTable(
  'audit_events',
  {
    id: bigserial('id', { mode: 'number' }).primaryKey(),
    at: timestamp('at', { withTimezone: true }).notNull().defaultNow(),
    actorId: integer('actor_id').references(() => people.id),
    action: text('action').notNull(),
    subjectType: text('subject_type'),
    subjectId: text('subject_id'),
    status: integer('status'),
    method: text('method'),
    path: text('path'),
    ip: text('ip'),
    detail: jsonb('detail').notNull().default(sql`'{}'::jsonb`),
    // (branch matrix) Where the event happened, for the admins' filters: filled on insert by a trigger
    // (drizzle/…_audit_event_place.sql) from the subject, the detail's ids or the request path, so no code path
    // can forget them. No foreign key: the trail outlives what it tells of.
    projectId: integer('project_id'),
    sheetId: integer('sheet_id'),
  },
  (table) => [
    index('audit_events_at').on(table.at),
    // (branch matrix) One per filter of GET /api/audit, each read newest first.
    index('audit_events_project_at').on(table.projectId, table.at),
    index('audit_events_sheet_at').on(table.sheetId, table.at),
    index('audit_events_actor_at').on(table.actorId, table.at),
    index('audit_events_action_at').on(table.action, table.at),
  ],
)

/** A project's groups of sheets, issued together (product.md: a calculation package). */
export const packages = pgTable(
  'packages',
  {
    id: serial('id').primaryKey(),
    projectId: integer('project_id')
      .notNull()
      .references(() => projects.id),
    number: text('number').notNull(),
    title: text('title').notNull(),
    createdBy: integer('created_by')
      .notNull()
      .references(() => people.id),
    createdAt: createdAt(),
  },
  (table) => [uniqueIndex('packages_project_number').on(table.projectId, table.number)],
)

/**
 * A calculation sheet: what stays the same across its revisions. The number comes from the firm's numbering
 * pattern (firm_settings.sheet_numbering) and is unique in the project.
 *
 * The `current_*` columns copy what the sheet list shows of the current revision (the highest index): a trigger
 * on sheet_revisions (drizzle/0003_sheet_current_revision.sql) keeps them, so no code path can forget them. They
 * exist because the list measured 140 to 280 ms per page with 10,000 sheets when it joined each sheet's current
 * revision (wide rows: the document is stored inline), and a few ms from this table alone (npm run bench).
 * The `issued_*` columns are the same for the newest issued (or superseded) revision, null while none is: what a
 * client's list shows, since a client sees a sheet whose next revision is being written as it was last issued
 * (drizzle/0017_sheet_issued_revision.sql; joining each sheet's newest issued revision instead measured 55 ms median
 * against 1.5 ms in the bench's client case).
 */
export const sheets = pgTable(
  'sheets',
  {
    id: serial('id').primaryKey(),
    projectId: integer('project_id')
      .notNull()
      .references(() => projects.id),
    packageId: integer('package_id').references(() => packages.id),
    number: text('number').notNull(),
    title: text('title').notNull(),
    loopTag: text('loop_tag').notNull(),
    createdBy: integer('created_by')
      .notNull()
      .references(() => people.id),
    createdAt: createdAt(),
    currentRevisionIndex: integer('current_revision_index').notNull().default(0),
    currentStatus: text('current_status').notNull().default('draft'),
    currentRevisionLabel: text('current_revision_label'),
    currentPreparedBy: integer('current_prepared_by')
      .notNull()
      .references(() => people.id),
    currentEditedBy: integer('current_edited_by')
      .notNull()
      .references(() => people.id),
    currentEditedAt: timestamp('current_edited_at', { withTimezone: true }).notNull().defaultNow(),
    issuedRevisionIndex: integer('issued_revision_index'),
    issuedStatus: text('issued_status'),
    issuedRevisionLabel: text('issued_revision_label'),
    issuedEditedBy: integer('issued_edited_by').references(() => people.id),
    issuedEditedAt: timestamp('issued_edited_at', { withTimezone: true }),
  },
  (table) => [
    uniqueIndex('sheets_project_number').on(table.projectId, table.number),
    // The list's default order: numbers by length, then text, come in sequence order (server/services/sheets.ts).
    index('sheets_project_number_order').on(table.projectId, sql`length(${table.number})`, table.number),
    index('sheets_project_title').on(table.projectId, table.title),
    index('sheets_project_status').on(table.projectId, table.currentStatus),
    index('sheets_project_edited_at').on(table.projectId, table.currentEditedAt),
    index('sheets_package').on(table.packageId),
    index('sheets_prepared_by').on(table.currentPreparedBy),
  ],
)

/**
 * One revision of a sheet: the whole sheet document as one jsonb value, the engine's result as the server
 * computed it at the last save, and a version every save bumps. The current revision is the highest index.
 */
export const sheetRevisions = pgTable(
  'sheet_revisions',
  {
    id: serial('id').primaryKey(),
    sheetId: integer('sheet_id')
      .notNull()
      .references(() => sheets.id),
    revisionIndex: integer('revision_index').notNull(),
    /** Null until the revision is issued. */
    label: text('label'),
    status: text('status').notNull().default('draft'),
    document: jsonb('document').notNull(),
    version: integer('version').notNull().default(1),
    /** Null when the engine refused the document at that save. */
    result: jsonb('result'),
    engineVersion: text('engine_version').notNull(),
    preparedBy: integer('prepared_by')
      .notNull()
      .references(() => people.id),
    editedBy: integer('edited_by')
      .notNull()
      .references(() => people.id),
    editedAt: timestamp('edited_at', { withTimezone: true }).notNull().defaultNow(),
    createdAt: createdAt(),
    // flow: the life of the revision (server/services/lifecycle.ts).
    submittedAt: timestamp('submitted_at', { withTimezone: true }),
    approvedAt: timestamp('approved_at', { withTimezone: true }),
    /** For information, for review, for implementation: set when the revision is issued. */
    purpose: text('purpose'),
    issuedAt: timestamp('issued_at', { withTimezone: true }),
    issuedBy: integer('issued_by').references(() => people.id),
    supersededAt: timestamp('superseded_at', { withTimezone: true }),
  },
  (table) => [
    check('sheet_revisions_purpose_known', sql`${table.purpose} is null or ${table.purpose} in ('information', 'review', 'implementation')`),
    uniqueIndex('sheet_revisions_sheet_index').on(table.sheetId, table.revisionIndex),
    check('sheet_revisions_status_known', sql`${table.status} in ('draft', 'in check', 'returned', 'approved', 'issued', 'superseded')`),
    check('sheet_revisions_index_natural', sql`${table.revisionIndex} >= 0`),
    check('sheet_revisions_version_positive', sql`${table.version} >= 1`),
  ],
)

/**
 * E-mail waiting to go out: written in the same transaction as the change it tells of (server/services/outbox.ts),
 * delivered by the outbox worker, which claims rows with FOR UPDATE SKIP LOCKED so several app servers on one
 * database never send one twice. `message_id` is the Message-ID header, fixed when the row is written.
 */
export const outbox = pgTable(
  'outbox',
  {
    id: bigserial('id', { mode: 'number' }).primaryKey(),
    messageId: text('message_id').notNull(),
    /** What the message is for (`sheet.submitted`, `password.reset`, …): the audit trail and the tests read it. */
    kind: text('kind').notNull(),
    recipient: text('recipient').notNull(),
    subject: text('subject').notNull(),
    body: text('body').notNull(),
    createdAt: createdAt(),
    attempts: integer('attempts').notNull().default(0),
    /** Not before this time: backoff after a failed attempt. */
    nextAttemptAt: timestamp('next_attempt_at', { withTimezone: true }).notNull().defaultNow(),
    /** A worker holds the row until then; past it, another may claim it (the holder died). */
    claimedUntil: timestamp('claimed_until', { withTimezone: true }),
    sentAt: timestamp('sent_at', { withTimezone: true }),
    /** Set when the worker gave up after its last attempt. */
    failedAt: timestamp('failed_at', { withTimezone: true }),
    lastError: text('last_error'),
  },
  (table) => [
    uniqueIndex('outbox_message_id').on(table.messageId),
    index('outbox_waiting').on(table.nextAttemptAt).where(sql`${table.sentAt} is null and ${table.failedAt} is null`),
  ],
)

/**
 * Background work other than e-mail (PDF renders first): one row a job, claimed in the database with
 * FOR UPDATE SKIP LOCKED by whichever app server is free (server/services/jobs.ts).
 */
export const jobs = pgTable(
  'jobs',
  {
    id: bigserial('id', { mode: 'number' }).primaryKey(),
    kind: text('kind').notNull(),
    payload: jsonb('payload').notNull(),
    status: text('status').notNull().default('waiting'),
    /** What the job has done so far, for a progress bar: `{ done, total, what }`. */
    progress: jsonb('progress'),
    result: jsonb('result'),
    lastError: text('last_error'),
    attempts: integer('attempts').notNull().default(0),
    maxAttempts: integer('max_attempts').notNull().default(3),
    runAfter: timestamp('run_after', { withTimezone: true }).notNull().defaultNow(),
    claimedUntil: timestamp('claimed_until', { withTimezone: true }),
    createdBy: integer('created_by').references(() => people.id),
    createdAt: createdAt(),
    finishedAt: timestamp('finished_at', { withTimezone: true }),
  },
  (table) => [
    check('jobs_status_known', sql`${table.status} in ('waiting', 'running', 'done', 'failed')`),
    index('jobs_waiting').on(table.runAfter).where(sql`${table.status} in ('waiting', 'running')`),
  ],
)

// --- branch `review`: the checker's comments on a revision (issue 8, item 3) ---------------------------------------

/**
 * A checker's comment on one revision, anchored to what it concerns (shared/schemas/comments.ts): a section of
 * the sheet, a block id, a parameter symbol, or a derivation step named by its number in the revision's stored
 * result (with the step's title copied into `anchor_label` when written, so the comment still reads right after
 * the derivation changes). The engineer answers; a checker resolves. Comments stay with their revision (a new
 * revision starts with none) and are never shown to clients. `revision_version` is the version of the revision
 * the checker read when writing it.
 */
export const comments = pgTable(
  'comments',
  {
    id: serial('id').primaryKey(),
    revisionId: integer('revision_id')
      .notNull()
      .references(() => sheetRevisions.id),
    anchorKind: text('anchor_kind').notNull(),
    anchor: text('anchor').notNull(),
    anchorLabel: text('anchor_label'),
    body: text('body').notNull(),
    authorId: integer('author_id')
      .notNull()
      .references(() => people.id),
    revisionVersion: integer('revision_version').notNull(),
    createdAt: createdAt(),
    answer: text('answer'),
    answeredBy: integer('answered_by').references(() => people.id),
    answeredAt: timestamp('answered_at', { withTimezone: true }),
    /** The revision's version the engineer answered at. */
    answeredVersion: integer('answered_version'),
    resolvedBy: integer('resolved_by').references(() => people.id),
    resolvedAt: timestamp('resolved_at', { withTimezone: true }),
    /** The revision's version the checker resolved at: the content they saw the fix in. */
    resolvedVersion: integer('resolved_version'),
  },
  (table) => [
    index('comments_revision').on(table.revisionId, table.id),
    index('comments_open').on(table.revisionId).where(sql`${table.resolvedAt} is null`),
    check('comments_anchor_kind_known', sql`${table.anchorKind} in ('section', 'block', 'parameter', 'step')`),
    check('comments_answered_whole', sql`(${table.answer} is null) = (${table.answeredAt} is null)`),
    check('comments_resolved_whole', sql`(${table.resolvedBy} is null) = (${table.resolvedAt} is null)`),
  ],
)

// ---------------------------------------------------------------------------------------------------------------
// flow: signatures, who edited a revision, the issued PDFs and package issues (server/services/lifecycle.ts).
// drizzle/…_lifecycle_immutable.sql: the database refuses any change to an issued revision, a signature, a stored
// PDF and a package issue.

const bytea = customType<{ data: Buffer; driverData: Buffer }>({ dataType: () => 'bytea' })

/**
 * A signature: this person, in this role, at this time, for exactly this content. `contentHash` is the SHA-256
 * (hex) of the RFC 8785 canonical JSON of the revision's document (shared/calc/content-hash.ts); the signature
 * holds while the document still hashes to it. One signature of each meaning per revision.
 */
export const signatures = pgTable(
  'signatures',
  {
    id: serial('id').primaryKey(),
    revisionId: integer('revision_id')
      .notNull()
      .references(() => sheetRevisions.id),
    personId: integer('person_id')
      .notNull()
      .references(() => people.id),
    printedName: text('printed_name').notNull(),
    /** The role the person signed in: `checker` for approval, `engineer` for issue. */
    role: text('role').notNull(),
    meaning: text('meaning').notNull(),
    signedAt: timestamp('signed_at', { withTimezone: true }).notNull().defaultNow(),
    contentHash: text('content_hash').notNull(),
    engineVersion: text('engine_version').notNull(),
  },
  (table) => [
    uniqueIndex('signatures_revision_meaning').on(table.revisionId, table.meaning),
    check('signatures_meaning_known', sql`${table.meaning} in ('checked and approved', 'issued')`),
    check('signatures_role_known', sql`${table.role} in ('checker', 'engineer')`),
    check('signatures_hash_form', sql`${table.contentHash} ~ '^[0-9a-f]{64}$'`),
  ],
)

/** Everyone who made or edited a revision: nobody checks a revision they prepared or edited (product.md). */
export const revisionEditors = pgTable(
  'revision_editors',
  {
    revisionId: integer('revision_id')
      .notNull()
      .references(() => sheetRevisions.id),
    personId: integer('person_id')
      .notNull()
      .references(() => people.id),
    firstEditedAt: timestamp('first_edited_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (table) => [primaryKey({ columns: [table.revisionId, table.personId] })],
)

/** The PDF of an issued revision, stored in the transaction that issued it, with its own SHA-256 (hex). */
export const revisionPdfs = pgTable(
  'revision_pdfs',
  {
    revisionId: integer('revision_id')
      .primaryKey()
      .references(() => sheetRevisions.id),
    bytes: bytea('bytes').notNull(),
    sha256: text('sha256').notNull(),
    fileName: text('file_name').notNull(),
    pages: integer('pages'),
    createdAt: createdAt(),
    /**
     * The job of a single sheet's issue that stored it (null for a sheet issued in a package, whose package_issues
     * row names the job, and for issues made before issuing became a job): a retried job finds its own issue.
     */
    jobId: bigint('job_id', { mode: 'number' }).references(() => jobs.id),
  },
  (table) => [index('revision_pdfs_sha256').on(table.sha256), uniqueIndex('revision_pdfs_job').on(table.jobId)],
)

/** One issue of a whole package: its purpose, who issued it, the PDF of the package and the revisions it holds. */
export const packageIssues = pgTable(
  'package_issues',
  {
    id: serial('id').primaryKey(),
    packageId: integer('package_id')
      .notNull()
      .references(() => packages.id),
    purpose: text('purpose').notNull(),
    issuedBy: integer('issued_by')
      .notNull()
      .references(() => people.id),
    issuedAt: timestamp('issued_at', { withTimezone: true }).notNull(),
    /** The revisions issued (or carried, already issued) in this package, in the package's sheet order. */
    revisionIds: integer('revision_ids').array().notNull(),
    bytes: bytea('bytes').notNull(),
    sha256: text('sha256').notNull(),
    fileName: text('file_name').notNull(),
    pages: integer('pages'),
    /** The package's own revision label by the firm's rule over its earlier issues (null for issues made before labels). */
    label: text('label'),
    /** The job that made this issue (null for issues made before issuing became a job): a retried job finds its own issue. */
    jobId: bigint('job_id', { mode: 'number' }).references(() => jobs.id),
  },
  (table) => [
    index('package_issues_package').on(table.packageId),
    uniqueIndex('package_issues_job').on(table.jobId),
    check('package_issues_purpose_known', sql`${table.purpose} in ('information', 'review', 'implementation')`),
  ],
)

// ---------------------------------------------------------------------------------------------------------------
// Branch `mail` (issue 8, items 8 and 9): password resets and the client's acknowledgements of receipt.

/**
 * One-time password-reset links (POST /api/auth/reset-request): only the SHA-256 of the token is stored, the
 * link works once and for one hour (server/services/password-resets.ts).
 */
export const passwordResets = pgTable(
  'password_resets',
  {
    id: serial('id').primaryKey(),
    personId: integer('person_id')
      .notNull()
      .references(() => people.id),
    tokenHash: text('token_hash').notNull().unique(),
    expiresAt: timestamp('expires_at', { withTimezone: true }).notNull(),
    usedAt: timestamp('used_at', { withTimezone: true }),
    ip: text('ip'),
    createdAt: createdAt(),
  },
  (table) => [index('password_resets_person_created').on(table.personId, table.createdAt)],
)

/**
 * Every reset request, whether or not the address has an account: the throttles count these rows, so what they
 * answer never depends on the address (no account enumeration).
 */
export const passwordResetRequests = pgTable(
  'password_reset_requests',
  {
    id: bigserial('id', { mode: 'number' }).primaryKey(),
    email: text('email').notNull(),
    ip: text('ip'),
    at: timestamp('at', { withTimezone: true }).notNull().defaultNow(),
  },
  (table) => [index('password_reset_requests_ip_at').on(table.ip, table.at), index('password_reset_requests_email_at').on(table.email, table.at)],
)

/** A client's acknowledgement of receipt of an issued revision: once per person and revision, with its time. */
export const acknowledgements = pgTable(
  'acknowledgements',
  {
    id: serial('id').primaryKey(),
    revisionId: integer('revision_id')
      .notNull()
      .references(() => sheetRevisions.id),
    personId: integer('person_id')
      .notNull()
      .references(() => people.id),
    at: timestamp('at', { withTimezone: true }).notNull().defaultNow(),
    ip: text('ip'),
  },
  (table) => [uniqueIndex('acknowledgements_revision_person').on(table.revisionId, table.personId)],
)

// ---------------------------------------------------------------------------------------------------------------
// Branch `attach` (issue 10, item 1): attachments of a revision, their bytes in S3-compatible object storage.

/**
 * A file attached to one sheet revision: the record here, the bytes in object storage under `object_key`
 * (server/services/attachments.ts). `type` is what the content was found to be, never what the name says.
 * An issued or superseded revision's attachments are frozen with it (drizzle/0013_attachments_frozen.sql).
 */
export const attachments = pgTable(
  'attachments',
  {
    id: serial('id').primaryKey(),
    revisionId: integer('revision_id')
      .notNull()
      .references(() => sheetRevisions.id),
    name: text('name').notNull(),
    size: integer('size').notNull(),
    /** SHA-256 of the bytes, hex. */
    sha256: text('sha256').notNull(),
    /** The media type found from the content: application/pdf, image/png, image/jpeg, text/csv, text/plain. */
    type: text('type').notNull(),
    /** The stored object; a revision started from this one carries the same key (objects are never rewritten). */
    objectKey: text('object_key').notNull(),
    uploadedBy: integer('uploaded_by')
      .notNull()
      .references(() => people.id),
    uploadedAt: timestamp('uploaded_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (table) => [
    index('attachments_revision').on(table.revisionId),
    index('attachments_object_key').on(table.objectKey),
    check('attachments_size_positive', sql`${table.size} > 0`),
    check('attachments_sha256_hex', sql`${table.sha256} ~ '^[0-9a-f]{64}$'`),
    check('attachments_type_known', sql`${table.type} in ('application/pdf', 'image/png', 'image/jpeg', 'text/csv', 'text/plain')`),
  ],
)

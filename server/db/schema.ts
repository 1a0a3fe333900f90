// Drizzle tables of Loopwright. Migrations are generated from this file into drizzle/
// with `npx drizzle-kit generate`; the audit trail's append-only trigger is a custom migration.
import { sql } from 'drizzle-orm'
import {
  bigserial,
  boolean,
  check,
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
    updatedAt: timestamp('updated_at', { withTimezone: true }).notNull().defaultNow(),
  },
  (table) => [
    check('firm_settings_single_row', sql`${table.id} = 1`),
    check('firm_settings_paper_size', sql`${table.paperSize} in ('A4', 'Letter', 'A3')`),
  ],
)

/** Client organisations: the firm's clients (the firm itself lives in firm_settings). */
export const organisations = pgTable('organisations', {
  id: serial('id').primaryKey(),
  name: text('name').notNull().unique(),
  createdAt: createdAt(),
})

/**
 * Everyone who signs in. `passwordHash` is null until an invitation is accepted;
 * `sessionVersion` is bumped whenever roles or the active flag change, so live sessions notice.
 */
export const people = pgTable(
  'people',
  {
    id: serial('id').primaryKey(),
    name: text('name').notNull(),
    email: text('email').notNull().unique(),
    passwordHash: text('password_hash'),
    roles: text('roles').array().notNull().default(sql`'{}'::text[]`),
    active: boolean('active').notNull().default(true),
    sessionVersion: integer('session_version').notNull().default(1),
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

/** Every sign-in attempt, counted per e-mail address for the rate limit. */
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
  (table) => [index('login_attempts_email_at').on(table.email, table.at)],
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
  },
  (table) => [index('audit_events_at').on(table.at)],
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
  },
  (table) => [
    uniqueIndex('sheets_project_number').on(table.projectId, table.number),
    // The list's default order: numbers by length, then text, come in sequence order (server/services/sheets.ts).
    index('sheets_project_number_order').on(table.projectId, sql`length(${table.number})`, table.number),
    index('sheets_project_title').on(table.projectId, table.title),
    index('sheets_project_loop_tag').on(table.projectId, table.loopTag),
    index('sheets_package').on(table.packageId),
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
  },
  (table) => [
    uniqueIndex('sheet_revisions_sheet_index').on(table.sheetId, table.revisionIndex),
    index('sheet_revisions_status').on(table.status),
    index('sheet_revisions_edited_at').on(table.editedAt),
    index('sheet_revisions_prepared_by').on(table.preparedBy),
    check('sheet_revisions_status_known', sql`${table.status} in ('draft', 'in check', 'returned', 'approved', 'issued', 'superseded')`),
    check('sheet_revisions_index_natural', sql`${table.revisionIndex} >= 0`),
    check('sheet_revisions_version_positive', sql`${table.version} >= 1`),
  ],
)

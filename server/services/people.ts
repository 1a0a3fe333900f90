// People: the admins' paged list, invitations by e-mail, and changes of name, roles and active flag.
import { and, asc, desc, eq, isNotNull, isNull, notInArray, sql, type SQL } from 'drizzle-orm'
import { createError } from 'h3'
import type { z } from 'zod'
import { organisations, people, projectMembers } from '../db/schema'
import type { Database } from '../utils/db'
import type { InviteBody, PersonRow, PersonUpdateBody, peopleQuerySchema } from '../../shared/schemas/people'
import type { Page } from '../../shared/schemas/lists'
import type { Role } from '../../shared/schemas/roles'
import type { AuditContext } from './audit-trail'
import { audited } from './audited'
import { matchesTerm } from './search'
import { createInvitation } from './invitations'
import { endSessionsOf } from './sessions'

const status = sql<PersonRow['status']>`case
  when not ${people.active} then 'deactivated'
  when ${people.passwordHash} is null then 'invited'
  else 'active' end`

const rowColumns = {
  id: people.id,
  name: people.name,
  email: people.email,
  roles: people.roles,
  status,
  organisationId: people.organisationId,
  organisationName: organisations.name,
  createdAt: people.createdAt,
}

type SelectedRow = { roles: string[]; createdAt: Date } & Omit<PersonRow, 'roles' | 'createdAt'>

function toPersonRow(row: SelectedRow): PersonRow {
  return { ...row, roles: row.roles as Role[], createdAt: row.createdAt.toISOString() }
}

export async function findPersonRow(db: Database, id: number): Promise<PersonRow | null> {
  const [row] = await db
    .select(rowColumns)
    .from(people)
    .leftJoin(organisations, eq(organisations.id, people.organisationId))
    .where(eq(people.id, id))
  return row ? toPersonRow(row) : null
}

export async function listPeople(db: Database, query: z.output<typeof peopleQuerySchema>): Promise<Page<PersonRow>> {
  const filters: SQL[] = []
  if (query.q) filters.push(matchesTerm(query.q, [people.name, people.email]))
  if (query.role) filters.push(sql`${people.roles} @> array[${query.role}]::text[]`)
  if (query.status === 'deactivated') filters.push(eq(people.active, false))
  if (query.status === 'invited') filters.push(and(eq(people.active, true), isNull(people.passwordHash))!)
  if (query.status === 'active') filters.push(and(eq(people.active, true), isNotNull(people.passwordHash))!)
  const where = filters.length ? and(...filters) : undefined
  const column = { name: people.name, email: people.email, createdAt: people.createdAt }[query.sort]
  const direction = query.dir === 'desc' ? desc : asc
  const [rows, [counted]] = await Promise.all([
    db
      .select(rowColumns)
      .from(people)
      .leftJoin(organisations, eq(organisations.id, people.organisationId))
      .where(where)
      .orderBy(direction(column), direction(people.id))
      .limit(query.pageSize)
      .offset((query.page - 1) * query.pageSize),
    db.select({ total: sql<number>`count(*)::int` }).from(people).where(where),
  ])
  return { items: rows.map(toPersonRow), total: counted?.total ?? 0, page: query.page, pageSize: query.pageSize }
}

/** Creates the person without a password and e-mails them (through the outbox) a one-time link to choose one. */
export async function invitePerson(
  db: Database,
  body: InviteBody,
  context: AuditContext,
  siteUrl: string,
): Promise<PersonRow> {
  const organisationId = body.roles.includes('client') ? (body.organisationId ?? null) : null
  if (organisationId !== null) {
    const [organisation] = await db.select().from(organisations).where(eq(organisations.id, organisationId))
    if (!organisation) {
      throw createError({
        statusCode: 400,
        statusMessage: 'Some fields need attention',
        data: { issues: { formErrors: [], fieldErrors: { organisationId: ['This client organisation does not exist'] } } },
      })
    }
  }
  const { personId } = await audited(
    db,
    context,
    ({ personId }: { personId: number }) => ({
      action: 'person.invited',
      subjectType: 'person',
      subjectId: personId,
      detail: { email: body.email, roles: body.roles },
    }),
    async (tx) => {
      const [created] = await tx
        .insert(people)
        .values({ name: body.name, email: body.email, roles: body.roles, organisationId })
        .onConflictDoNothing()
        .returning({ id: people.id })
      if (!created) {
        throw createError({ statusCode: 409, statusMessage: 'Someone with this e-mail address already has an account' })
      }
      await createInvitation(tx, { id: created.id, name: body.name, email: body.email }, context.actorId, siteUrl)
      return { personId: created.id }
    },
  )
  return (await findPersonRow(db, personId))!
}

export async function updatePerson(db: Database, id: number, body: PersonUpdateBody, context: AuditContext): Promise<PersonRow> {
  const [person] = await db.select().from(people).where(eq(people.id, id))
  if (!person) throw createError({ statusCode: 404, statusMessage: 'No such person' })
  if (body.roles?.includes('client') && !person.organisationId) {
    throw createError({
      statusCode: 400,
      statusMessage: 'Some fields need attention',
      data: { issues: { formErrors: [], fieldErrors: { roles: ['A client contact belongs to a client organisation; invite them as one'] } } },
    })
  }
  const rolesChanged = body.roles !== undefined && [...body.roles].sort().join() !== [...person.roles].sort().join()
  const activeChanged = body.active !== undefined && body.active !== person.active
  await audited(
    db,
    context,
    ({ removedMemberships, endedSessions }: { removedMemberships: string[]; endedSessions: number }) => ({
      action: activeChanged ? (body.active ? 'person.reactivated' : 'person.deactivated') : 'person.updated',
      subjectType: 'person',
      subjectId: id,
      detail: {
        ...(body.name !== undefined && body.name !== person.name && { name: { from: person.name, to: body.name } }),
        ...(rolesChanged && { roles: { from: person.roles, to: body.roles } }),
        ...(removedMemberships.length > 0 && { removedMemberships }),
        ...(endedSessions > 0 && { endedSessions }),
      },
    }),
    async (tx) => {
      await tx
        .update(people)
        .set({
          ...(body.name !== undefined && { name: body.name }),
          ...(body.roles !== undefined && { roles: body.roles }),
          ...(body.active !== undefined && { active: body.active }),
        })
        .where(eq(people.id, id))
      // A deactivated person's sessions end at once, and a reactivated one signs in afresh; changed roles end
      // the sessions too, so no session ever carries roles the person no longer holds.
      const ending = activeChanged ? (body.active ? 'reactivated' : 'deactivated') : rolesChanged ? 'roles changed' : null
      const endedSessions = ending ? await endSessionsOf(tx, id, ending) : 0
      if (!rolesChanged) return { removedMemberships: [], endedSessions }
      // A project role needs the matching global role: memberships whose role the person lost are ended.
      const removed = await tx
        .delete(projectMembers)
        .where(and(eq(projectMembers.personId, id), notInArray(projectMembers.role, body.roles!)))
        .returning({ projectId: projectMembers.projectId, role: projectMembers.role })
      return { removedMemberships: removed.map((row) => `${row.projectId}:${row.role}`), endedSessions }
    },
  )
  return (await findPersonRow(db, id))!
}

/** An admin's "sign out everywhere" for one person: every live session of theirs ends. */
export async function endPersonSessions(db: Database, id: number, context: AuditContext): Promise<{ endedSessions: number }> {
  return audited(
    db,
    context,
    ({ endedSessions }: { endedSessions: number }) => ({
      action: 'person.sessions-ended',
      subjectType: 'person',
      subjectId: id,
      detail: { endedSessions },
    }),
    async (tx) => {
      const [person] = await tx.select({ id: people.id }).from(people).where(eq(people.id, id))
      if (!person) throw createError({ statusCode: 404, statusMessage: 'No such person' })
      return { endedSessions: await endSessionsOf(tx, id, 'signed out everywhere by an administrator') }
    },
  )
}

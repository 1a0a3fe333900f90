// Projects and their members. Admins see every project; everyone else sees the projects they are a member of.
// A member's project role needs the matching global role, and a client member belongs to the project's client.
import { and, asc, desc, eq, sql, type SQL } from 'drizzle-orm'
import { createError } from 'h3'
import type { z } from 'zod'
import { organisations, people, projectMembers, projects } from '../db/schema'
import type { Database } from '../utils/db'
import type { MemberBody, ProjectBody, ProjectDetail, ProjectMember, ProjectRow, projectsQuerySchema } from '../../shared/schemas/projects'
import type { Page } from '../../shared/schemas/lists'
import type { Role } from '../../shared/schemas/roles'
import type { AuditContext } from './audit-trail'
import { audited, type Executor } from './audited'
import { matchesTerm } from './search'

export interface Viewer {
  id: number
  roles: Role[]
}

// Written out in full: drizzle may leave a column unqualified, and inside a subquery that would name the wrong table.
const projectId = sql.raw('"projects"."id"')

const rowColumns = {
  id: projects.id,
  number: projects.number,
  name: projects.name,
  organisationId: projects.organisationId,
  organisationName: organisations.name,
  memberCount: sql<number>`(select count(distinct ${projectMembers.personId})::int from ${projectMembers}
    where ${projectMembers.projectId} = ${projectId})`,
  createdAt: projects.createdAt,
}

function toRow(row: Omit<ProjectRow, 'createdAt'> & { createdAt: Date }): ProjectRow {
  return { ...row, createdAt: row.createdAt.toISOString() }
}

function memberOf(viewer: Viewer): SQL {
  return sql`exists (select 1 from ${projectMembers}
    where ${projectMembers.projectId} = ${projectId} and ${projectMembers.personId} = ${viewer.id})`
}

function invalidField(field: string, message: string): never {
  throw createError({
    statusCode: 400,
    statusMessage: 'Some fields need attention',
    data: { issues: { formErrors: [], fieldErrors: { [field]: [message] } } },
  })
}

export async function listProjects(db: Database, query: z.output<typeof projectsQuerySchema>, viewer: Viewer): Promise<Page<ProjectRow>> {
  const filters: SQL[] = []
  if (!viewer.roles.includes('admin')) filters.push(memberOf(viewer))
  if (query.q) filters.push(matchesTerm(query.q, [projects.number, projects.name, organisations.name]))
  const where = filters.length ? and(...filters) : undefined
  const column = { number: projects.number, name: projects.name, createdAt: projects.createdAt }[query.sort]
  const direction = query.dir === 'desc' ? desc : asc
  const [rows, [counted]] = await Promise.all([
    db
      .select(rowColumns)
      .from(projects)
      .innerJoin(organisations, eq(organisations.id, projects.organisationId))
      .where(where)
      .orderBy(direction(column), direction(projects.id))
      .limit(query.pageSize)
      .offset((query.page - 1) * query.pageSize),
    db
      .select({ total: sql<number>`count(*)::int` })
      .from(projects)
      .innerJoin(organisations, eq(organisations.id, projects.organisationId))
      .where(where),
  ])
  return { items: rows.map(toRow), total: counted?.total ?? 0, page: query.page, pageSize: query.pageSize }
}

async function projectDetail(db: Executor, id: number): Promise<ProjectDetail | null> {
  const [row] = await db
    .select(rowColumns)
    .from(projects)
    .innerJoin(organisations, eq(organisations.id, projects.organisationId))
    .where(eq(projects.id, id))
  if (!row) return null
  const members = await db
    .select({ personId: people.id, name: people.name, email: people.email, role: projectMembers.role })
    .from(projectMembers)
    .innerJoin(people, eq(people.id, projectMembers.personId))
    .where(eq(projectMembers.projectId, id))
    .orderBy(asc(projectMembers.role), asc(people.name))
  return { ...toRow(row), members: members as ProjectMember[] }
}

/** The project for `viewer`; `forbidden` when it exists but they may not see it (the route audits the refusal). */
export async function viewProject(db: Database, id: number, viewer: Viewer): Promise<ProjectDetail | 'forbidden'> {
  const detail = await projectDetail(db, id)
  if (!detail) throw createError({ statusCode: 404, statusMessage: 'No such project' })
  if (viewer.roles.includes('admin') || detail.members.some((member) => member.personId === viewer.id)) return detail
  return 'forbidden'
}

export async function createProject(db: Database, body: ProjectBody, context: AuditContext): Promise<ProjectDetail> {
  const [client] = await db.select().from(organisations).where(eq(organisations.id, body.organisationId))
  if (!client) invalidField('organisationId', 'This client organisation does not exist')
  const id = await audited(
    db,
    context,
    (id: number) => ({
      action: 'project.created',
      subjectType: 'project',
      subjectId: id,
      detail: { number: body.number, name: body.name, organisationId: body.organisationId },
    }),
    async (tx) => {
      const [created] = await tx
        .insert(projects)
        .values({ number: body.number, name: body.name, organisationId: body.organisationId })
        .onConflictDoNothing()
        .returning({ id: projects.id })
      if (!created) throw createError({ statusCode: 409, statusMessage: `Project number ${body.number} is already taken` })
      return created.id
    },
  )
  return (await projectDetail(db, id))!
}

export async function addMember(db: Database, projectId: number, body: MemberBody, context: AuditContext): Promise<ProjectDetail> {
  const project = await projectDetail(db, projectId)
  if (!project) throw createError({ statusCode: 404, statusMessage: 'No such project' })
  const [person] = await db.select().from(people).where(eq(people.id, body.personId))
  if (!person) invalidField('personId', 'No such person')
  if (!person.active) invalidField('personId', 'This person is deactivated')
  if (!person.roles.includes(body.role)) invalidField('role', `This person does not hold the ${body.role} role`)
  if (body.role === 'client' && person.organisationId !== project.organisationId) {
    invalidField('personId', `A client member belongs to ${project.organisationName}`)
  }
  const entry = { action: 'project.member-added', subjectType: 'project', subjectId: projectId, detail: { personId: person.id, role: body.role } }
  await audited(db, context, entry, async (tx) => {
    const added = await tx.insert(projectMembers).values({ projectId, personId: person.id, role: body.role }).onConflictDoNothing().returning()
    if (added.length === 0) throw createError({ statusCode: 409, statusMessage: 'This person already holds that role on the project' })
  })
  return (await projectDetail(db, projectId))!
}

export async function removeMember(db: Database, projectId: number, personId: number, context: AuditContext): Promise<ProjectDetail> {
  await audited(
    db,
    context,
    (roles: string[]) => ({ action: 'project.member-removed', subjectType: 'project', subjectId: projectId, detail: { personId, roles } }),
    async (tx) => {
      const removed = await tx
        .delete(projectMembers)
        .where(and(eq(projectMembers.projectId, projectId), eq(projectMembers.personId, personId)))
        .returning({ role: projectMembers.role })
      if (removed.length === 0) throw createError({ statusCode: 404, statusMessage: 'This person is not a member of the project' })
      return removed.map((row) => row.role)
    },
  )
  return (await projectDetail(db, projectId))!
}

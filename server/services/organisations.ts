// Client organisations: the admins' paged list and creation.
import { asc, desc, eq, sql } from 'drizzle-orm'
import { createError } from 'h3'
import type { z } from 'zod'
import { organisations, people, projects } from '../db/schema'
import type { Database } from '../utils/db'
import type { OrganisationBody, OrganisationRow, organisationsQuerySchema } from '../../shared/schemas/organisations'
import type { Page } from '../../shared/schemas/lists'
import type { AuditContext } from './audit-trail'
import { audited } from './audited'
import { matchesTerm } from './search'

// Written out in full: drizzle leaves a column unqualified in a single-table select, and inside these
// subqueries a bare "id" would name the subquery's own table.
const organisationId = sql.raw('"organisations"."id"')

const rowColumns = {
  id: organisations.id,
  name: organisations.name,
  projectCount: sql<number>`(select count(*)::int from ${projects} where ${projects.organisationId} = ${organisationId})`,
  contactCount: sql<number>`(select count(*)::int from ${people} where ${people.organisationId} = ${organisationId})`,
  createdAt: organisations.createdAt,
}

function toRow(row: Omit<OrganisationRow, 'createdAt'> & { createdAt: Date }): OrganisationRow {
  return { ...row, createdAt: row.createdAt.toISOString() }
}

export async function listOrganisations(db: Database, query: z.output<typeof organisationsQuerySchema>): Promise<Page<OrganisationRow>> {
  const where = query.q ? matchesTerm(query.q, [organisations.name]) : undefined
  const column = { name: organisations.name, createdAt: organisations.createdAt }[query.sort]
  const direction = query.dir === 'desc' ? desc : asc
  const [rows, [counted]] = await Promise.all([
    db
      .select(rowColumns)
      .from(organisations)
      .where(where)
      .orderBy(direction(column), direction(organisations.id))
      .limit(query.pageSize)
      .offset((query.page - 1) * query.pageSize),
    db.select({ total: sql<number>`count(*)::int` }).from(organisations).where(where),
  ])
  return { items: rows.map(toRow), total: counted?.total ?? 0, page: query.page, pageSize: query.pageSize }
}

export async function createOrganisation(db: Database, body: OrganisationBody, context: AuditContext): Promise<OrganisationRow> {
  const id = await audited(
    db,
    context,
    (id: number) => ({ action: 'organisation.created', subjectType: 'organisation', subjectId: id, detail: { name: body.name } }),
    async (tx) => {
      const [created] = await tx.insert(organisations).values({ name: body.name }).onConflictDoNothing().returning({ id: organisations.id })
      if (!created) throw createError({ statusCode: 409, statusMessage: 'A client organisation of this name already exists' })
      return created.id
    },
  )
  const [row] = await db.select(rowColumns).from(organisations).where(eq(organisations.id, id))
  return toRow(row!)
}

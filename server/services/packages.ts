// Calculation packages: a project's groups of sheets, issued together (product.md). Members read them; engineers
// who are members create them. A client counts only the issued sheets of a package.
import { and, asc, eq, sql } from 'drizzle-orm'
import { createError } from 'h3'
import { packages, projects } from '../db/schema'
import type { Database } from '../utils/db'
import type { PackageBody, PackageRow } from '../../shared/schemas/sheets'
import { recordAuditEvent, type AuditContext } from './audit-trail'
import { projectAccess, refused, type Refused, type Viewer } from './sheets'

const packageIdColumn = sql.raw('"packages"."id"')

// A client counts the sheets issued at least once (sheets.issued_*): one whose next revision is being written counts.
function sheetCount(clientView: boolean) {
  const visible = clientView ? sql` and s.issued_revision_index is not null` : sql``
  return sql<number>`(select count(*)::int from sheets s where s.package_id = ${packageIdColumn}${visible})`
}

/** GET /api/projects/[id]/packages, in number order. */
export async function listPackages(db: Database, projectId: number, viewer: Viewer): Promise<PackageRow[] | Refused> {
  const access = await projectAccess(db, projectId, viewer)
  if (!access.read) return refused('You are not a member of this project', { projectId })
  return db
    .select({ id: packages.id, number: packages.number, title: packages.title, sheetCount: sheetCount(!access.drafts) })
    .from(packages)
    .where(eq(packages.projectId, projectId))
    .orderBy(asc(sql`length(${packages.number})`), asc(packages.number))
}

/** POST /api/projects/[id]/packages: without a number, the next free `P01`, `P02`… of the project. */
export async function createPackage(db: Database, projectId: number, body: PackageBody, viewer: Viewer, context: AuditContext): Promise<PackageRow | Refused> {
  const access = await projectAccess(db, projectId, viewer)
  if (!access.write) return refused('Only engineers of this project create its packages', { projectId })
  return db.transaction(async (tx) => {
    // The project's row lock makes two creations in one project take turns for the next number.
    await tx.select({ id: projects.id }).from(projects).where(eq(projects.id, projectId)).for('update')
    let number = body.number
    if (!number) {
      const taken = new Set((await tx.select({ number: packages.number }).from(packages).where(eq(packages.projectId, projectId))).map((row) => row.number))
      let seq = taken.size + 1
      while (taken.has(`P${String(seq).padStart(2, '0')}`)) seq++
      number = `P${String(seq).padStart(2, '0')}`
    }
    const [created] = await tx
      .insert(packages)
      .values({ projectId, number, title: body.title, createdBy: viewer.id })
      .onConflictDoNothing()
      .returning({ id: packages.id, number: packages.number, title: packages.title })
    if (!created) throw createError({ statusCode: 409, statusMessage: `Package number ${number} is already taken in this project` })
    await recordAuditEvent(tx, context, { action: 'package.created', subjectType: 'package', subjectId: created.id, detail: { projectId, number, title: body.title } })
    return { ...created, sheetCount: 0 }
  })
}

/** The package of `projectId` with this id, or null. */
export async function findPackage(db: Pick<Database, 'select'>, projectId: number, packageId: number) {
  const [found] = await db.select({ id: packages.id }).from(packages).where(and(eq(packages.id, packageId), eq(packages.projectId, projectId)))
  return found ?? null
}

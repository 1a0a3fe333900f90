// The client's portal (issue 8, item 9; product.md, "Who uses it": a client sees issued documents of their own
// organisation's projects). A client reaches a project by being a client member of it while belonging to the
// project's organisation; both must hold, so a person moved to another organisation loses the old one's work.
import { and, asc, desc, eq, inArray, sql } from 'drizzle-orm'
import { createError } from 'h3'
import { acknowledgements, organisations, packageIssues, packages, people, projectMembers, projects, revisionPdfs, sheetRevisions, sheets } from '../db/schema'
import type { Database } from '../utils/db'
import type { Acknowledgement, Portal, PortalPackageIssue, PortalProject, PortalRevision } from '../../shared/schemas/portal'
import type { IssuePurpose } from '../../shared/schemas/lifecycle'
import { recordAuditEvent, type AuditContext } from './audit-trail'
import { refused, type Refused, type Viewer } from './sheets'

const issuedStatuses = ['issued', 'superseded'] as const

/** The projects of which `viewer` is a client member and whose organisation is the viewer's own. */
async function clientProjects(db: Pick<Database, 'select'>, viewer: Viewer) {
  if (!viewer.roles.includes('client')) return []
  return db
    .select({ id: projects.id, number: projects.number, name: projects.name })
    .from(projects)
    .innerJoin(projectMembers, and(eq(projectMembers.projectId, projects.id), eq(projectMembers.personId, viewer.id), eq(projectMembers.role, 'client')))
    .innerJoin(people, and(eq(people.id, viewer.id), eq(people.organisationId, projects.organisationId)))
    .orderBy(asc(projects.number))
}

/** GET /api/portal: the client's organisation's projects with their issued revisions and package issues. */
export async function portalOf(db: Database, viewer: Viewer): Promise<Portal> {
  const [organisation] = await db
    .select({ name: organisations.name })
    .from(people)
    .innerJoin(organisations, eq(organisations.id, people.organisationId))
    .where(eq(people.id, viewer.id))
  const found = await clientProjects(db, viewer)
  if (found.length === 0) return { organisationName: organisation?.name ?? null, projects: [] }
  const projectIds = found.map((project) => project.id)

  const revisionRows = await db
    .select({
      projectId: sheets.projectId,
      revisionId: sheetRevisions.id,
      sheetId: sheets.id,
      sheetNumber: sheets.number,
      title: sheets.title,
      loopTag: sheets.loopTag,
      label: sheetRevisions.label,
      status: sheetRevisions.status,
      purpose: sheetRevisions.purpose,
      issuedAt: sheetRevisions.issuedAt,
      supersededAt: sheetRevisions.supersededAt,
      revisionIndex: sheetRevisions.revisionIndex,
      fileName: revisionPdfs.fileName,
      acknowledgedAt: acknowledgements.at,
    })
    .from(sheetRevisions)
    .innerJoin(sheets, eq(sheets.id, sheetRevisions.sheetId))
    .leftJoin(revisionPdfs, eq(revisionPdfs.revisionId, sheetRevisions.id))
    .leftJoin(acknowledgements, and(eq(acknowledgements.revisionId, sheetRevisions.id), eq(acknowledgements.personId, viewer.id)))
    .where(and(inArray(sheets.projectId, projectIds), inArray(sheetRevisions.status, [...issuedStatuses])))
    .orderBy(sql`length(${sheets.number})`, asc(sheets.number), desc(sheetRevisions.revisionIndex))

  const packageRows = await db
    .select({
      projectId: packages.projectId,
      packageIssueId: packageIssues.id,
      packageId: packages.id,
      packageNumber: packages.number,
      title: packages.title,
      purpose: packageIssues.purpose,
      issuedAt: packageIssues.issuedAt,
      fileName: packageIssues.fileName,
      revisionIds: packageIssues.revisionIds,
    })
    .from(packageIssues)
    .innerJoin(packages, eq(packages.id, packageIssues.packageId))
    .where(inArray(packages.projectId, projectIds))
    .orderBy(asc(packages.number), desc(packageIssues.issuedAt))

  return {
    organisationName: organisation?.name ?? null,
    projects: found.map(
      (project): PortalProject => ({
        ...project,
        revisions: revisionRows
          .filter((row) => row.projectId === project.id)
          .map(
            (row): PortalRevision => ({
              revisionId: row.revisionId,
              sheetId: row.sheetId,
              sheetNumber: row.sheetNumber,
              title: row.title,
              loopTag: row.loopTag,
              label: row.label,
              status: row.status as PortalRevision['status'],
              purpose: row.purpose as IssuePurpose | null,
              issuedAt: row.issuedAt?.toISOString() ?? null,
              supersededAt: row.supersededAt?.toISOString() ?? null,
              fileName: row.fileName,
              pdfUrl: `/api/revisions/${row.revisionId}/pdf`,
              acknowledgedAt: row.acknowledgedAt?.toISOString() ?? null,
            }),
          ),
        packageIssues: packageRows
          .filter((row) => row.projectId === project.id)
          .map(
            (row): PortalPackageIssue => ({
              packageIssueId: row.packageIssueId,
              packageId: row.packageId,
              packageNumber: row.packageNumber,
              title: row.title,
              purpose: row.purpose as IssuePurpose,
              issuedAt: row.issuedAt.toISOString(),
              fileName: row.fileName,
              revisionIds: row.revisionIds,
              pdfUrl: `/api/package-issues/${row.packageIssueId}/pdf`,
            }),
          ),
      }),
    ),
  }
}

/** Whether `viewer` is a client of the project, by membership and organisation (see the file's head). */
async function isClientOf(db: Pick<Database, 'select'>, projectId: number, viewer: Viewer): Promise<boolean> {
  return (await clientProjects(db, viewer)).some((project) => project.id === projectId)
}

/**
 * POST /api/revisions/[id]/acknowledge: a client of the project acknowledges receipt of an issued or superseded
 * revision, once per person (a unique index); a second call answers the first's time and records nothing.
 */
export async function acknowledgeRevision(db: Database, revisionId: number, viewer: Viewer, context: AuditContext): Promise<Acknowledgement | Refused> {
  const [row] = await db
    .select({ status: sheetRevisions.status, projectId: sheets.projectId, sheetId: sheets.id })
    .from(sheetRevisions)
    .innerJoin(sheets, eq(sheets.id, sheetRevisions.sheetId))
    .where(eq(sheetRevisions.id, revisionId))
  if (!row) throw createError({ statusCode: 404, statusMessage: 'No such revision' })
  if (!(await isClientOf(db, row.projectId, viewer))) return refused('Only a client of this project’s organisation acknowledges receipt', { revisionId })
  if (!(issuedStatuses as readonly string[]).includes(row.status)) return refused('This revision is not issued', { revisionId, status: row.status })
  return db.transaction(async (tx) => {
    const [made] = await tx
      .insert(acknowledgements)
      .values({ revisionId, personId: viewer.id, ip: context.ip })
      .onConflictDoNothing({ target: [acknowledgements.revisionId, acknowledgements.personId] })
      .returning({ at: acknowledgements.at })
    if (made) {
      await recordAuditEvent(tx, context, {
        action: 'revision.acknowledged',
        subjectType: 'sheet_revision',
        subjectId: revisionId,
        detail: { sheetId: row.sheetId, status: row.status },
      })
      return { revisionId, acknowledgedAt: made.at.toISOString(), recorded: true }
    }
    const [earlier] = await tx
      .select({ at: acknowledgements.at })
      .from(acknowledgements)
      .where(and(eq(acknowledgements.revisionId, revisionId), eq(acknowledgements.personId, viewer.id)))
    return { revisionId, acknowledgedAt: earlier!.at.toISOString(), recorded: false }
  })
}

/** GET /api/package-issues/[id]/pdf: who may download a package issue's PDF, and the PDF. 404 when there is none. */
export async function packageIssuePdf(db: Database, packageIssueId: number, viewer: Viewer) {
  const [row] = await db
    .select({ projectId: packages.projectId, bytes: packageIssues.bytes, sha256: packageIssues.sha256, fileName: packageIssues.fileName, pages: packageIssues.pages })
    .from(packageIssues)
    .innerJoin(packages, eq(packages.id, packageIssues.packageId))
    .where(eq(packageIssues.id, packageIssueId))
  if (!row) throw createError({ statusCode: 404, statusMessage: 'No such package issue' })
  const admin = viewer.roles.includes('admin')
  const roles = await db
    .select({ role: projectMembers.role })
    .from(projectMembers)
    .where(and(eq(projectMembers.projectId, row.projectId), eq(projectMembers.personId, viewer.id)))
  const staff = roles.some(({ role }) => (role === 'engineer' || role === 'checker') && viewer.roles.includes(role))
  if (!admin && !staff && !(await isClientOf(db, row.projectId, viewer))) return refused('You are not a member of this package’s project', { packageIssueId })
  return row
}

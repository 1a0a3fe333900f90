// Verification of a PDF by its SHA-256 (issue 9 item 6): anyone holding a PDF may learn whether it is an issued
// revision or package issue, and which. Only rows stored at issue are looked up (revision_pdfs, package_issues),
// and only revisions whose status is issued or superseded answer, so no hash of a preview or of unissued work
// ever matches: everything else gets the same "not issued" answer, which tells nothing.
import { sql } from 'drizzle-orm'
import type { Database } from '../utils/db'
import { notIssuedMessage, type VerifiedPackage, type VerifiedRevision, type VerifyAnswer } from '../../shared/schemas/verify'

const iso = (value: Date | string | null) => (value === null ? null : new Date(value).toISOString())

interface RevisionRow extends Record<string, unknown> {
  revision_id: number
  sheet_number: string
  title: string
  loop_tag: string
  project_number: string
  project_name: string
  client: string
  label: string
  purpose: string | null
  status: string
  issued_at: Date | string
  superseded_at: Date | string | null
  current_label: string | null
  file_name: string
  pages: number | null
}

async function issuedRevision(db: Database, sha256: string): Promise<VerifiedRevision | null> {
  const [row] = await db.execute<RevisionRow>(sql`
    select r.id as revision_id, s.number as sheet_number, s.title, s.loop_tag, p.number as project_number,
           p.name as project_name, o.name as client, r.label, r.purpose, r.status, r.issued_at, r.superseded_at,
           (select c.label from sheet_revisions c where c.sheet_id = s.id and c.status = 'issued'
             order by c.revision_index desc limit 1) as current_label,
           f.file_name, f.pages
      from revision_pdfs f
      join sheet_revisions r on r.id = f.revision_id
      join sheets s on s.id = r.sheet_id
      join projects p on p.id = s.project_id
      join organisations o on o.id = p.organisation_id
     where f.sha256 = ${sha256} and r.status in ('issued', 'superseded') and r.issued_at is not null
     limit 1`)
  if (!row) return null
  const signatures = await db.execute<{ printed_name: string; role: string; meaning: string; signed_at: Date | string }>(sql`
    select printed_name, role, meaning, signed_at from signatures where revision_id = ${row.revision_id} order by signed_at, id`)
  return {
    kind: 'revision',
    sheetNumber: row.sheet_number,
    title: row.title,
    loopTag: row.loop_tag,
    projectNumber: row.project_number,
    projectName: row.project_name,
    client: row.client,
    revision: row.label,
    purpose: row.purpose,
    issuedAt: iso(row.issued_at)!,
    standing: row.status === 'superseded' ? 'superseded' : 'current',
    supersededAt: iso(row.superseded_at),
    currentRevision: row.current_label,
    signatures: signatures.map((signature) => ({
      name: signature.printed_name,
      role: signature.role,
      meaning: signature.meaning,
      signedAt: iso(signature.signed_at)!,
    })),
    fileName: row.file_name,
    pages: row.pages,
  }
}

interface PackageRow extends Record<string, unknown> {
  id: number
  package_number: string
  title: string
  project_number: string
  project_name: string
  client: string
  purpose: string
  issued_at: Date | string
  issued_by: string
  revision_ids: number[]
  file_name: string
  pages: number | null
}

async function issuedPackage(db: Database, sha256: string): Promise<VerifiedPackage | null> {
  const [row] = await db.execute<PackageRow>(sql`
    select i.id, k.number as package_number, k.title, p.number as project_number, p.name as project_name,
           o.name as client, i.purpose, i.issued_at, b.name as issued_by, i.revision_ids, i.file_name, i.pages
      from package_issues i
      join packages k on k.id = i.package_id
      join projects p on p.id = k.project_id
      join organisations o on o.id = p.organisation_id
      join people b on b.id = i.issued_by
     where i.sha256 = ${sha256}
     order by i.issued_at desc
     limit 1`)
  if (!row) return null
  // The revisions a package issue carried were issued by it (or before it): only issued ones are named.
  const ids = row.revision_ids.map(Number)
  const carried = ids.length
    ? await db.execute<{ id: number; sheet_number: string; title: string; label: string; status: string }>(sql`
        select r.id, s.number as sheet_number, s.title, r.label, r.status
          from sheet_revisions r
          join sheets s on s.id = r.sheet_id
         where r.id in (${sql.join(ids.map((id) => sql`${id}`), sql`, `)}) and r.status in ('issued', 'superseded')`)
    : []
  // In the package's own order, as its index lists them.
  const sheets = [...carried].sort((a, b) => ids.indexOf(Number(a.id)) - ids.indexOf(Number(b.id)))
  return {
    kind: 'package',
    packageNumber: row.package_number,
    title: row.title,
    projectNumber: row.project_number,
    projectName: row.project_name,
    client: row.client,
    purpose: row.purpose,
    issuedAt: iso(row.issued_at)!,
    issuedBy: row.issued_by,
    sheets: sheets.map((sheet) => ({
      sheetNumber: sheet.sheet_number,
      title: sheet.title,
      revision: sheet.label,
      standing: sheet.status === 'superseded' ? 'superseded' : 'current',
    })),
    fileName: row.file_name,
    pages: row.pages,
  }
}

/** What a PDF of this SHA-256 is: an issued revision, a package issue, or nothing Loopwright issued. */
export async function verifyPdf(db: Database, sha256: string): Promise<VerifyAnswer> {
  const document = (await issuedRevision(db, sha256)) ?? (await issuedPackage(db, sha256))
  return document ? { issued: true, document } : { issued: false, message: notIssuedMessage }
}

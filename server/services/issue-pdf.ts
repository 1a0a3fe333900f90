// What issuing stores as the revision's PDF. The pdf branch's renderer (server/services/pdf-render.ts,
// `renderSheetPdf` / `renderPackagePdf`, Chromium printing /sheets/[id]/print) is the real one: when it is merged,
// `issueRenderer` below returns it and this interim document goes. Until then an issued revision stores a short
// PDF made with pdf-lib holding the title block, the issue's label, purpose, issuer, time and content hash: a real
// file whose SHA-256 is stored beside it, never the full printed calculation (said in DEVELOPERS.md).
import { PDFDocument, StandardFonts } from 'pdf-lib'
import { eq } from 'drizzle-orm'
import { packages, projects, sheetRevisions, sheets } from '../db/schema'
import type { Database } from '../utils/db'
import { sha256Hex } from '../utils/content-hash'

export interface IssueStamp {
  label: string
  purpose: string
  issuedBy: string
  issuedAt: string
}
export interface RenderedPdf {
  bytes: Buffer
  sha256: string
  pages: number
  fileName: string
}
/** The interface of the pdf branch's renderer (notes/common8.md). */
export interface PdfRenderer {
  renderSheetPdf(revisionId: number, options?: { issue?: IssueStamp }): Promise<RenderedPdf>
  renderPackagePdf(packageId: number, options?: { issue?: IssueStamp; revisionIds?: number[] }): Promise<RenderedPdf>
}

const safeName = (text: string) => text.replace(/[^A-Za-z0-9._-]+/g, '_')

async function pdfOf(title: string, lines: string[]): Promise<{ bytes: Buffer; pages: number }> {
  const pdf = await PDFDocument.create()
  pdf.setTitle(title)
  pdf.setCreator('Loopwright')
  const font = await pdf.embedFont(StandardFonts.Helvetica)
  const page = pdf.addPage([595.28, 841.89])
  let y = 800
  for (const line of [title, '', ...lines]) {
    page.drawText(line.replace(/[^\x20-\x7e]/g, '?').slice(0, 110), { x: 50, y, size: line === title ? 14 : 10, font })
    y -= 16
  }
  const bytes = Buffer.from(await pdf.save({ useObjectStreams: false }))
  return { bytes, pages: pdf.getPageCount() }
}

/** The interim renderer, reading the revision from the database. */
export function interimRenderer(db: Database): PdfRenderer {
  return {
    async renderSheetPdf(revisionId, options) {
      const [row] = await db
        .select({ number: sheets.number, title: sheets.title, loopTag: sheets.loopTag, project: projects.number, index: sheetRevisions.revisionIndex })
        .from(sheetRevisions)
        .innerJoin(sheets, eq(sheets.id, sheetRevisions.sheetId))
        .innerJoin(projects, eq(projects.id, sheets.projectId))
        .where(eq(sheetRevisions.id, revisionId))
      if (!row) throw new Error(`no revision ${revisionId}`)
      const issue = options?.issue
      const { bytes, pages } = await pdfOf(`${row.number} ${row.title}`, [
        `Project ${row.project} - loop ${row.loopTag}`,
        issue ? `Revision ${issue.label}, issued for ${issue.purpose} by ${issue.issuedBy} at ${issue.issuedAt}` : `Working revision ${row.index}: preliminary, not issued`,
      ])
      return { bytes, sha256: sha256Hex(bytes), pages, fileName: `${safeName(row.number)}_rev-${safeName(issue?.label ?? `w${row.index}`)}.pdf` }
    },
    async renderPackagePdf(packageId, options) {
      const [row] = await db.select({ number: packages.number, title: packages.title }).from(packages).where(eq(packages.id, packageId))
      if (!row) throw new Error(`no package ${packageId}`)
      const issue = options?.issue
      const { bytes, pages } = await pdfOf(`Package ${row.number} ${row.title}`, [
        issue ? `Issued for ${issue.purpose} by ${issue.issuedBy} at ${issue.issuedAt}` : 'Preliminary, not issued',
        `Revisions: ${(options?.revisionIds ?? []).join(', ')}`,
      ])
      return { bytes, sha256: sha256Hex(bytes), pages, fileName: `${safeName(row.number)}_${issue ? safeName(issue.issuedAt.slice(0, 10)) : 'preview'}.pdf` }
    },
  }
}

export function issueRenderer(db: Database): PdfRenderer {
  return interimRenderer(db)
}

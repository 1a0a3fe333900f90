// What issuing stores as the revision's PDF: the print view printed by Chromium (server/services/pdf-render.ts).
import { PDFDocument } from 'pdf-lib'
import { eq } from 'drizzle-orm'
import { packages, projects, revisionPdfs } from '../db/schema'
import { renderSheetPdf } from './pdf-render'
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
  renderPackagePdf(packageId: number, options?: { issue?: IssueStamp; revisionIds?: number[]; parts?: Map<number, Buffer> }): Promise<RenderedPdf>
}

const safeName = (text: string) => text.replace(/[^A-Za-z0-9._-]+/g, '_')

/**
 * The renderer issuing uses: each sheet printed by Chromium from its print view (server/services/pdf-render.ts),
 * and a package as its sheets' PDFs in the package's order, merged with pdf-lib: the PDF just made for a revision
 * issued with the package (`parts`), the stored one for a revision already issued. The package's own cover sheet
 * (transmittal, index with page ranges) is issue 9's and not made yet.
 */
export function issueRenderer(db: Database): PdfRenderer {
  return {
    renderSheetPdf: (revisionId, options) => renderSheetPdf(revisionId, options),
    async renderPackagePdf(packageId, options) {
      const [row] = await db.select({ number: packages.number, title: packages.title, project: projects.number }).from(packages).innerJoin(projects, eq(projects.id, packages.projectId)).where(eq(packages.id, packageId))
      if (!row) throw new Error(`no package ${packageId}`)
      const merged = await PDFDocument.create()
      for (const revisionId of options?.revisionIds ?? []) {
        let bytes = options?.parts?.get(revisionId)
        if (!bytes) {
          const [stored] = await db.select({ bytes: revisionPdfs.bytes }).from(revisionPdfs).where(eq(revisionPdfs.revisionId, revisionId))
          if (!stored) throw new Error(`revision ${revisionId} has no stored PDF`)
          bytes = stored.bytes
        }
        const part = await PDFDocument.load(bytes)
        for (const page of await merged.copyPages(part, part.getPageIndices())) merged.addPage(page)
      }
      merged.setTitle(`Package ${row.project} ${row.number}: ${row.title}`)
      merged.setCreator('Loopwright')
      merged.setProducer('Loopwright')
      const issue = options?.issue
      if (issue) merged.setCreationDate(new Date(issue.issuedAt))
      const bytes = Buffer.from(await merged.save())
      return { bytes, sha256: sha256Hex(bytes), pages: merged.getPageCount(), fileName: `${safeName(row.project)}_${safeName(row.number)}_${issue ? safeName(issue.issuedAt.slice(0, 10)) : 'preview'}.pdf` }
    },
  }
}

// What issuing stores: each sheet's PDF printed by Chromium from its print view (server/services/pdf-render.ts), and
// a package's PDF, its cover sheet and its sheets with page numbers through the package (server/services/package-pdf.ts).
import type { PrintIssue } from '../../shared/schemas/print'
import { renderSheetPdf, type RenderedPdf } from './pdf-render'
import { renderPackagePdf, type CoverFacts, type PackagePart } from './package-pdf'

export type IssueStamp = PrintIssue
export type { RenderedPdf }

export interface PdfRenderer {
  renderSheetPdf(revisionId: number, options?: { issue?: IssueStamp }): Promise<RenderedPdf>
  renderPackagePdf(packageId: number, facts: CoverFacts, parts: PackagePart[]): Promise<RenderedPdf>
}

/** The renderer issuing uses; `stampFont` reads the Noto face the package's page numbers are stamped in. */
export function issueRenderer(stampFont: () => Promise<Uint8Array>): PdfRenderer {
  return {
    renderSheetPdf: (revisionId, options) => renderSheetPdf(revisionId, options),
    renderPackagePdf: async (packageId, facts, parts) => renderPackagePdf(packageId, facts, parts, await stampFont()),
  }
}

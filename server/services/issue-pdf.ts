// What issuing stores: each sheet's PDF printed by Chromium from its print view (server/services/pdf-render.ts), and
// a package's PDF, its cover sheet and its sheets with page numbers through the package (server/services/package-pdf.ts).
import type { PrintIssue } from '../../shared/schemas/print'
import { renderSheetPdf, type RenderedPdf } from './pdf-render'
import { assemblePackagePdf, type PackageAssembly } from './package-pdf'

export type IssueStamp = PrintIssue
export type { RenderedPdf }

export interface PdfRenderer {
  renderSheetPdf(revisionId: number, options?: { issue?: IssueStamp }): Promise<RenderedPdf>
  /** The PDF of package `packageId` of `count` sheets, merged as its sheets come (server/services/package-pdf.ts). */
  assemblePackagePdf(packageId: number, count: number): PackageAssembly
}

/** The renderer issuing uses; `stampFont` reads the Noto face the package's page numbers are stamped in. */
export function issueRenderer(stampFont: () => Promise<Uint8Array>): PdfRenderer {
  return {
    renderSheetPdf: (revisionId, options) => renderSheetPdf(revisionId, options),
    assemblePackagePdf: (packageId, count) => assemblePackagePdf(packageId, count, stampFont()),
  }
}

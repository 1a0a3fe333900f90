import { packageIssuePdf } from '../../../services/portal'

/** GET /api/package-issues/[id]/pdf: the PDF stored when the package was issued, attached. Audited. */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  const pdf = await unlessRefused(event, await packageIssuePdf(useDb(), id, viewer))
  await audit(event, {
    action: 'pdf.downloaded',
    subjectType: 'package_issue',
    subjectId: id,
    detail: { fileName: pdf.fileName, sha256: pdf.sha256, pages: pdf.pages, stored: true },
  })
  setResponseHeaders(event, {
    'content-type': 'application/pdf',
    'content-disposition': `attachment; filename="${pdf.fileName}"`,
    'x-content-sha256': pdf.sha256,
    'cache-control': 'private, no-store',
  })
  return pdf.bytes
})

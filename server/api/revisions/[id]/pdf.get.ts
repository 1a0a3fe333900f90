import { renderSheetPdf, RenderError } from '../../../services/pdf-render'
import { viewRevision } from '../../../services/sheets'
import { revisionPdfs } from '../../../db/schema'
import { eq } from 'drizzle-orm'

/**
 * GET /api/revisions/[id]/pdf: the revision's PDF. A draft, a revision in check, returned or approved: a preview
 * rendered now, inline (it opens in the browser). An issued or superseded one: the PDF stored when it was issued
 * (revision_pdfs), attached. Clients only issued revisions of their own projects. Audited.
 *
 * The preview is rendered inside the request, by this app server's own renderer, not queued as a job (issues are).
 * A job earns its keep by outliving the request: it is retried when its server dies and its result is stored for
 * whoever polls. Neither helps a preview: once the request is gone nobody waits for it, and the person opens it again.
 * Through the queue, every preview's PDF (often MBs) would be written to the database and read back by the request,
 * and it would wait behind whatever the runners hold, a package issue of 20 sheets among them (two jobs per server),
 * so a bounded wait would give up exactly when the servers are busy. In the request, a load balancer spreads previews
 * over the app servers, and each server's renderer admits at most its tabs at once (LOOPWRIGHT_PDF_PAGES), the others
 * waiting in turn; the render token's key is per process and the print view is opened on this server's loopback, so
 * a render is made by the server that asked for it in either design.
 */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  const detail = await unlessRefused(event, await viewRevision(useDb(), id, viewer))
  const issued = ['issued', 'superseded'].includes(detail.revision.status)
  const [stored] = issued ? await useDb().select().from(revisionPdfs).where(eq(revisionPdfs.revisionId, id)) : []
  const pdf = stored
    ? { bytes: stored.bytes, sha256: stored.sha256, pages: stored.pages ?? 0, fileName: stored.fileName, blockedRequests: [] as string[] }
    : await renderSheetPdf(id).catch((error: unknown) => {
        throw createError({ statusCode: 503, statusMessage: 'The PDF could not be made now', message: error instanceof RenderError ? error.message : 'The renderer failed' })
      })
  await audit(event, {
    action: 'pdf.downloaded',
    subjectType: 'sheet_revision',
    subjectId: id,
    detail: { sheetId: detail.id, fileName: pdf.fileName, sha256: pdf.sha256, pages: pdf.pages, preview: !issued, stored: Boolean(stored), blockedRequests: pdf.blockedRequests },
  })
  setResponseHeaders(event, {
    'content-type': 'application/pdf',
    'content-disposition': `${issued ? 'attachment' : 'inline'}; filename="${pdf.fileName}"`,
    'x-content-sha256': pdf.sha256,
    'cache-control': 'private, no-store',
    // Where a preview's render spent its time (data, queue, ready, print, finish), for the browser's tools and the bench.
    ...(pdf.timings ? { 'server-timing': Object.entries(pdf.timings).map(([name, ms]) => `${name};dur=${ms.toFixed(1)}`).join(', ') } : {}),
  })
  return pdf.bytes
})

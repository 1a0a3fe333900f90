import { downloadAttachment } from '../../services/attachments'

/**
 * GET /api/attachments/[id]: the file, with its name in Content-Disposition and its SHA-256 in x-content-sha256;
 * the sheet's permissions (a client only an issued revision's). Audited as a download.
 */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  const file = await unlessRefused(event, await downloadAttachment(useDb(), id, viewer))
  await audit(event, {
    action: 'attachment.downloaded',
    subjectType: 'attachment',
    subjectId: id,
    detail: { sheetId: file.sheetId, revisionId: file.revisionId, name: file.name, sha256: file.sha256 },
  })
  setResponseHeaders(event, {
    'content-type': file.type === 'text/csv' || file.type === 'text/plain' ? `${file.type}; charset=utf-8` : file.type,
    'content-disposition': contentDisposition(file.name),
    'x-content-sha256': file.sha256,
    'cache-control': 'private, no-store',
  })
  return file.bytes
})

/** `attachment` with the name twice: plain ASCII for old readers, and RFC 6266's UTF-8 `filename*`. */
function contentDisposition(name: string): string {
  const ascii = name.replace(/[^\x20-\x7e]/g, '_').replace(/["\\]/g, '_')
  return `attachment; filename="${ascii}"; filename*=UTF-8''${encodeURIComponent(name)}`
}

import { printDataQuerySchema } from '../../../shared/schemas/print'

/**
 * GET /api/package-print/[token]: the cover sheet (transmittal) of a package being rendered, for the package print
 * view opened by the PDF renderer (server/services/package-pdf.ts). Takes no session; a token that is not this
 * process's, or expired, is refused (403, audited).
 */
export default defineEventHandler(async (event) => {
  const { token } = await getValidatedRouterParams(event, parseWith(printDataQuerySchema))
  const cover = readCoverToken(token)
  if (!cover) return refuse(event, 403, 'This render token is not valid or has expired')
  return cover
})

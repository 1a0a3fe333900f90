import { printDataQuerySchema } from '../../../shared/schemas/print'
import { printSheet } from '../../services/print-data'
import { preparedPrintData, printSiteUrl } from '../../services/pdf-render'

/**
 * GET /api/print/[token]: the print view's data for the PDF renderer, for the one revision its render
 * token names (server/utils/render-token.ts). Takes no session; a token that is not this process's, or expired,
 * is refused (403, audited).
 */
export default defineEventHandler(async (event) => {
  const { token } = await getValidatedRouterParams(event, parseWith(printDataQuerySchema))
  const claims = readRenderToken(token)
  if (!claims) return refuse(event, 403, 'This render token is not valid or has expired')
  // The renderer made this render's data before it waited for a tab (server/services/pdf-render.ts).
  const prepared = preparedPrintData(token)
  if (prepared !== undefined) {
    setResponseHeader(event, 'content-type', 'application/json')
    return prepared
  }
  const sheet = await printSheet(useDb(), claims.revisionId, claims.issue, printSiteUrl())
  if (!sheet) throw createError({ statusCode: 404, statusMessage: 'No such revision' })
  return sheet
})

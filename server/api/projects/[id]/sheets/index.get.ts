import { sheetsQuerySchema } from '../../../../../shared/schemas/sheets'
import { listProjectSheets } from '../../../../services/sheets'

/** GET /api/projects/[id]/sheets: one page of the project's sheets (a client sees only issued ones). */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  const query = await getValidatedQuery(event, parseWith(sheetsQuerySchema))
  return unlessRefused(event, await listProjectSheets(useDb(), id, query, viewer))
})

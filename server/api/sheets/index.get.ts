import { mySheetsQuerySchema } from '../../../shared/schemas/sheets'
import { listMySheets } from '../../services/sheets'

/** GET /api/sheets: the signed-in engineer's own sheets across their projects (the home page's "Your sheets"). */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const query = await getValidatedQuery(event, parseWith(mySheetsQuerySchema))
  return listMySheets(useDb(), query, viewer)
})

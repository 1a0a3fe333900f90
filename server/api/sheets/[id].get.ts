import { viewSheet } from '../../services/sheets'

/** GET /api/sheets/[id]: the sheet and its current revision. */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  return unlessRefused(event, await viewSheet(useDb(), id, viewer))
})

import { returnSchema } from '../../../../shared/schemas/lifecycle'
import { returnSheet } from '../../../services/lifecycle'

/** POST /api/sheets/[id]/return: a checker member sends a sheet in check back to its preparer. */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  const body = await readValidatedBody(event, parseNamingField(returnSchema))
  return unlessRefused(event, await returnSheet(useDb(), id, body, viewer, auditContext(event, viewer.id), linksOf(event)))
})

import { approveSchema } from '../../../../shared/schemas/lifecycle'
import { approveSheet } from '../../../services/lifecycle'

/** POST /api/sheets/[id]/approve: the checker's signature, with their password typed again. */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  const body = await readValidatedBody(event, parseNamingField(approveSchema))
  return unlessRefused(event, await withRetryAfter(event, () => approveSheet(useDb(), id, body, viewer, auditContext(event, viewer.id), linksOf(event), signing)))
})

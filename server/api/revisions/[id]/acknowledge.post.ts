import { acknowledgeSchema } from '../../../../shared/schemas/portal'
import { acknowledgeRevision } from '../../../services/portal'

/**
 * POST /api/revisions/[id]/acknowledge: a client of the project's organisation acknowledges receipt of an issued
 * or superseded revision, once (a second call answers the first's time); 403, audited, for anyone else.
 */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  await readValidatedBody(event, parseNamingField(acknowledgeSchema))
  return unlessRefused(event, await acknowledgeRevision(useDb(), id, viewer, auditContext(event, viewer.id)))
})

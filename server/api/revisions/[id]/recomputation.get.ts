import { calculate } from '../../../services/calculation'
import { recomputeRevision } from '../../../services/revisions'

/**
 * GET /api/revisions/[id]/recomputation: the revision computed again by the engine as it is now, against the result
 * stored at its last save, with the engine version of each. Through the fair pool and the person's limits (429).
 */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  const compute = (text: string) => calculate({ personId: viewer.id, text, retryAfter: (seconds) => setResponseHeader(event, 'retry-after', seconds) })
  return unlessRefused(event, await recomputeRevision(useDb(), id, viewer, compute))
})

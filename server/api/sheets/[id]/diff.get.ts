import { revisionDiffQuerySchema } from '../../../../shared/schemas/revisions'
import { revisionDiff } from '../../../services/revisions'

/** GET /api/sheets/[id]/diff?from=&to=: what changed between two revisions, named by their indexes (0, 1, 2…). */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  const query = await getValidatedQuery(event, parseWith(revisionDiffQuerySchema))
  return unlessRefused(event, await revisionDiff(useDb(), id, query, viewer))
})

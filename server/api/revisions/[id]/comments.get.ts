import { listComments } from '../../../services/comments'

/** GET /api/revisions/[id]/comments: the revision's comments and what the viewer may do with them; 403 to clients. */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  return unlessRefused(event, await listComments(useDb(), id, viewer))
})

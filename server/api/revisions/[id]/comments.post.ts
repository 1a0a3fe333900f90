import { newCommentSchema } from '../../../../shared/schemas/comments'
import { addComment } from '../../../services/comments'

/** POST /api/revisions/[id]/comments: a checker comments on a revision in check; 409 when `version` is stale. */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  const body = await readValidatedBody(event, parseNamingField(newCommentSchema))
  const answer = await unlessRefused(event, await addComment(useDb(), id, body, viewer, auditContext(event, viewer.id)))
  setResponseStatus(event, 201)
  return answer
})

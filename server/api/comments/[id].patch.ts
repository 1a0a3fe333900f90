import { commentUpdateSchema } from '../../../shared/schemas/comments'
import { updateComment } from '../../services/comments'

/** PATCH /api/comments/[id]: the engineer answers (`action: answer`), a checker resolves; 409 when `version` is stale. */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  const body = await readValidatedBody(event, parseNamingField(commentUpdateSchema))
  return unlessRefused(event, await updateComment(useDb(), id, body, viewer, auditContext(event, viewer.id)))
})

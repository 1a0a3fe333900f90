import { pageRefusalSchema } from '../../../shared/schemas/audit'

/**
 * POST /api/audit/page-refusals: the screen refused to open a page to this person's roles
 * (app/middleware/role.ts); the refusal goes into the audit trail like the server's own. The roles recorded are
 * the session's, never the screen's word, and a person may add at most `pageRefusalLimit` rows a minute.
 */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event)
  const body = await readValidatedBody(event, parseWith(pageRefusalSchema))
  await takeFromLimit(event, pageRefusalLimit, user.id)
  await audit(event, { action: 'page.refused', status: 403, detail: { page: body.page, holds: user.roles } }, user.id)
  setResponseStatus(event, 204)
  return null
})

import { pageRefusalSchema } from '../../../shared/schemas/audit'

/**
 * POST /api/audit/page-refusals: the screen refused to open a page to this person's roles
 * (app/middleware/role.ts); the refusal goes into the audit trail like the server's own.
 */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event)
  const body = await readValidatedBody(event, parseWith(pageRefusalSchema))
  await audit(event, {
    action: 'page.refused',
    status: 403,
    detail: { page: body.page, needs: body.roles, holds: user.roles },
  })
  setResponseStatus(event, 204)
  return null
})

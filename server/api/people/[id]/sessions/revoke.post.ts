import { endPersonSessions } from '../../../../services/people'

// An admin's "sign out everywhere": every live session of the person ends; they sign in afresh.
export default defineEventHandler(async (event) => {
  const admin = await requireRole(event, 'admin')
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  return endPersonSessions(useDb(), id, auditContext(event, admin.id))
})

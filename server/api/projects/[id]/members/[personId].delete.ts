import { removeMember } from '../../../../services/projects'

export default defineEventHandler(async (event) => {
  const admin = await requireRole(event, 'admin')
  const { id, personId } = await getValidatedRouterParams(event, parseWith(memberParams))
  return removeMember(useDb(), id, personId, auditContext(event, admin.id))
})

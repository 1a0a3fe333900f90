import { memberSchema } from '../../../../../shared/schemas/projects'
import { addMember } from '../../../../services/projects'

export default defineEventHandler(async (event) => {
  const admin = await requireRole(event, 'admin')
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  const body = await readValidatedBody(event, parseWith(memberSchema))
  const project = await addMember(useDb(), id, body, auditContext(event, admin.id))
  setResponseStatus(event, 201)
  return project
})

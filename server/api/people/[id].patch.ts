import { personUpdateSchema } from '../../../shared/schemas/people'
import { updatePerson } from '../../services/people'

export default defineEventHandler(async (event) => {
  const admin = await requireRole(event, 'admin')
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  const body = await readValidatedBody(event, parseWith(personUpdateSchema))
  // An admin cannot lock themselves out: someone else must take their admin role or deactivate them.
  if (id === admin.id && body.roles && !body.roles.includes('admin')) {
    await refuse(event, 403, 'You cannot remove your own admin role')
  }
  if (id === admin.id && body.active === false) await refuse(event, 403, 'You cannot deactivate yourself')
  return updatePerson(useDb(), id, body, auditContext(event, admin.id))
})

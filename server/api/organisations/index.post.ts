import { organisationSchema } from '../../../shared/schemas/organisations'
import { createOrganisation } from '../../services/organisations'

export default defineEventHandler(async (event) => {
  const admin = await requireRole(event, 'admin')
  const body = await readValidatedBody(event, parseWith(organisationSchema))
  const organisation = await createOrganisation(useDb(), body, auditContext(event, admin.id))
  setResponseStatus(event, 201)
  return organisation
})

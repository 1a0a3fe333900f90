import { organisationsQuerySchema } from '../../../shared/schemas/organisations'
import { listOrganisations } from '../../services/organisations'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'admin')
  const query = await getValidatedQuery(event, parseWith(organisationsQuerySchema))
  return listOrganisations(useDb(), query)
})

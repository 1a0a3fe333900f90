import { peopleQuerySchema } from '../../../shared/schemas/people'
import { listPeople } from '../../services/people'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'admin')
  const query = await getValidatedQuery(event, parseWith(peopleQuerySchema))
  return listPeople(useDb(), query)
})

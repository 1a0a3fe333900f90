import { projectsQuerySchema } from '../../../shared/schemas/projects'
import { listProjects } from '../../services/projects'

export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const query = await getValidatedQuery(event, parseWith(projectsQuerySchema))
  return listProjects(useDb(), query, viewer)
})

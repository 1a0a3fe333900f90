import { viewProject } from '../../../services/projects'

export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  const project = await viewProject(useDb(), id, viewer)
  if (project === 'forbidden') return refuse(event, 403, 'You are not a member of this project', { projectId: id })
  return project
})

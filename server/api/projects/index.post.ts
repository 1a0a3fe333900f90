import { projectSchema } from '../../../shared/schemas/projects'
import { createProject } from '../../services/projects'

export default defineEventHandler(async (event) => {
  const admin = await requireRole(event, 'admin')
  const body = await readValidatedBody(event, parseWith(projectSchema))
  const project = await createProject(useDb(), body, auditContext(event, admin.id))
  setResponseStatus(event, 201)
  return project
})

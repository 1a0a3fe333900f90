import { packageSchema } from '../../../../../shared/schemas/sheets'
import { createPackage } from '../../../../services/packages'

/** POST /api/projects/[id]/packages: 201 `PackageRow`. */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  const body = await readValidatedBody(event, parseNamingField(packageSchema))
  const created = await unlessRefused(event, await createPackage(useDb(), id, body, viewer, auditContext(event, viewer.id)))
  setResponseStatus(event, 201)
  return created
})

import { listPackages } from '../../../../services/packages'

/** GET /api/projects/[id]/packages: the project's packages, each with its number of sheets. */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  return unlessRefused(event, await listPackages(useDb(), id, viewer))
})

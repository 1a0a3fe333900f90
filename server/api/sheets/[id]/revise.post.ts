import { versionOnlySchema } from '../../../../shared/schemas/lifecycle'
import { reviseSheet } from '../../../services/lifecycle'

/** POST /api/sheets/[id]/revise (server/services/lifecycle.ts): 409 with `data.current` from another state or a stale version. */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  const body = await readValidatedBody(event, parseNamingField(versionOnlySchema))
  return unlessRefused(event, await reviseSheet(useDb(), id, body, viewer, auditContext(event, viewer.id)))
})

import { revisionHistory } from '../../../services/revisions'

/** GET /api/sheets/[id]/revisions: every revision, newest first (a client: issued and superseded ones only). */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  return unlessRefused(event, await revisionHistory(useDb(), id, viewer))
})

import { listSheetAttachments } from '../../../services/attachments'

/** GET /api/sheets/[id]/attachments: the current revision's attachments, as the sheet's permissions allow. */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  return unlessRefused(event, await listSheetAttachments(useDb(), id, viewer))
})

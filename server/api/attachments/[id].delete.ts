import { deleteAttachment } from '../../services/attachments'

/** DELETE /api/attachments/[id]: removes an attachment of a draft (or returned) revision; 409 otherwise. */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  return unlessRefused(event, await deleteAttachment(useDb(), id, viewer, auditContext(event, viewer.id)))
})

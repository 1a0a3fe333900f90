import { listAuditActions } from '../../services/audit-trail'

/** GET /api/audit/actions: the actions the trail holds, the choices of the audit page's action filter. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'admin')
  return listAuditActions(useDb())
})

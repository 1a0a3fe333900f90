import { auditQuerySchema } from '../../../shared/schemas/audit'
import { listAuditEvents } from '../../services/audit-trail'

export default defineEventHandler(async (event) => {
  await requireRole(event, 'admin')
  const query = await getValidatedQuery(event, parseWith(auditQuerySchema))
  return listAuditEvents(useDb(), query)
})

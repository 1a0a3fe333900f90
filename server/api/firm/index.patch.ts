import { firmSettingsSchema } from '../../../shared/schemas/firm'
import { updateFirmSettings } from '../../services/firm'

export default defineEventHandler(async (event) => {
  const admin = await requireRole(event, 'admin')
  const body = await readValidatedBody(event, parseWith(firmSettingsSchema))
  return updateFirmSettings(useDb(), body, auditContext(event, admin.id))
})

import { readFirmSettings } from '../../services/firm'

export default defineEventHandler(async (event) => {
  await requireRole(event)
  return readFirmSettings(useDb())
})

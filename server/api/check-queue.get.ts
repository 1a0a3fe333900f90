import { listCheckQueue } from '../services/sheets'

/** GET /api/check-queue: revisions waiting for the signed-in checker, the longest waiting first (home page). */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  return listCheckQueue(useDb(), viewer)
})

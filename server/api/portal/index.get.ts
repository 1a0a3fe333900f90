import { portalOf } from '../../services/portal'

/** GET /api/portal: a client's organisation's projects, their issued revisions and package issues (home page). */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event, 'client')
  return portalOf(useDb(), viewer)
})

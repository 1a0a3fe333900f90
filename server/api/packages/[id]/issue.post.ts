import { packageIssueSchema } from '../../../../shared/schemas/lifecycle'
import { requestPackageIssue } from '../../../services/lifecycle'

/**
 * POST /api/packages/[id]/issue: 202 with the job that renders the package and issues every sheet in one
 * transaction, or none (GET /api/jobs/[id] for its progress); who may, the password and the sheets' states are
 * answered at once (403, 409).
 */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  const body = await readValidatedBody(event, parseNamingField(packageIssueSchema))
  const queued = await unlessRefused(event, await withRetryAfter(event, () => requestPackageIssue(useDb(), id, body, viewer, auditContext(event, viewer.id), linksOf(event), signing)))
  setResponseStatus(event, 202)
  return queued
})

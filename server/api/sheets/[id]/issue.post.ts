import { issueSchema } from '../../../../shared/schemas/lifecycle'
import { requestSheetIssue } from '../../../services/lifecycle'

/**
 * POST /api/sheets/[id]/issue: 202 with the job that renders the PDF and issues the sheet in one transaction
 * (GET /api/jobs/[id] for its progress); who may, the password, the version and the state are answered at once
 * (403, 409, 429), as is a second issue while one is queued or running.
 */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  const body = await readValidatedBody(event, parseNamingField(issueSchema))
  const queued = await unlessRefused(event, await withRetryAfter(event, () => requestSheetIssue(useDb(), id, body, viewer, auditContext(event, viewer.id), linksOf(event), signing)))
  setResponseStatus(event, 202)
  return queued
})

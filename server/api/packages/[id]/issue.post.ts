import { packageIssueSchema } from '../../../../shared/schemas/lifecycle'
import { issuePackage } from '../../../services/lifecycle'

/** POST /api/packages/[id]/issue: every sheet of the package issued in one transaction, or none. */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  const body = await readValidatedBody(event, parseNamingField(packageIssueSchema))
  return unlessRefused(event, await withRetryAfter(event, () => issuePackage(useDb(), id, body, viewer, auditContext(event, viewer.id), linksOf(event), signing, renderer())))
})

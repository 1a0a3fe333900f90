import { issueSchema } from '../../../../shared/schemas/lifecycle'
import { issueSheet } from '../../../services/lifecycle'

/** POST /api/sheets/[id]/issue: label, purpose, the issuer's signature and the stored PDF, in one transaction. */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event)
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  const body = await readValidatedBody(event, parseNamingField(issueSchema))
  return unlessRefused(event, await withRetryAfter(event, () => issueSheet(useDb(), id, body, viewer, auditContext(event, viewer.id), linksOf(event), signing, renderer())))
})

import { stepFitBodySchema } from '../../../../shared/schemas/step-test'
import { fitAttachment } from '../../../services/step-fit'

/**
 * POST /api/attachments/[id]/step-fit: the CSV attachment fitted to a first-order-plus-dead-time model, two-point
 * and least squares, with the plot's points. Engineers, checkers and admins who may see the attachment (a client
 * has no use for the fit); a refusal is audited (403), a record that cannot be fitted answers 400 naming its row.
 */
export default defineEventHandler(async (event) => {
  const viewer = await requireRole(event, 'engineer', 'checker', 'admin')
  const { id } = await getValidatedRouterParams(event, parseWith(idParams))
  const body = await readValidatedBody(event, parseWith(stepFitBodySchema))
  return unlessRefused(event, await fitAttachment(useDb(), id, body, viewer))
})

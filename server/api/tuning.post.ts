import { tuningBodySchema } from '../../shared/schemas/step-test'
import { tuneController } from '../services/tuning'

/** POST /api/tuning { rule, model, closedLoopTimeConstant? }: controller settings by a named rule, with formula and source. */
export default defineEventHandler(async (event) => {
  await requireRole(event, 'engineer', 'checker', 'admin')
  const body = await readValidatedBody(event, parseWith(tuningBodySchema))
  return tuneController(body)
})

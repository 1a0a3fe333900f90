import { resetPasswordSchema } from '../../../../shared/schemas/auth'
import { resetPassword } from '../../../services/password-resets'

export default defineEventHandler(async (event) => {
  const body = await readValidatedBody(event, parseWith(resetPasswordSchema))
  await resetPassword(useDb(), getRouterParam(event, 'token') ?? '', await hashPassword(body.password), auditContext(event, null))
  setResponseStatus(event, 204)
  return null
})

import { resetRequestSchema } from '../../../shared/schemas/auth'
import { requestPasswordReset } from '../../services/password-resets'

export default defineEventHandler(async (event) => {
  const body = await readValidatedBody(event, parseWith(resetRequestSchema))
  const siteUrl = useRuntimeConfig().public.siteUrl || getRequestURL(event).origin
  await requestPasswordReset(useDb(), body.email, auditContext(event, null), siteUrl)
  setResponseStatus(event, 202)
  return { sent: 'If this address has an active account, a reset link is on its way.' }
})

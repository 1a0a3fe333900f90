import { acceptInvitationSchema } from '../../../shared/schemas/auth'
import { acceptInvitation } from '../../services/invitations'

export default defineEventHandler(async (event) => {
  const body = await readValidatedBody(event, parseWith(acceptInvitationSchema))
  const token = getRouterParam(event, 'token') ?? ''
  await acceptInvitation(useDb(), token, await hashPassword(body.password), auditContext(event, null))
  setResponseStatus(event, 204)
  return null
})

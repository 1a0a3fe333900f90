import { readInvitation } from '../../services/invitations'

export default defineEventHandler(async (event) => {
  return readInvitation(useDb(), getRouterParam(event, 'token') ?? '')
})

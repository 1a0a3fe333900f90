import { inviteSchema } from '../../../shared/schemas/people'
import { invitePerson } from '../../services/people'

export default defineEventHandler(async (event) => {
  const admin = await requireRole(event, 'admin')
  const body = await readValidatedBody(event, parseWith(inviteSchema))
  const siteUrl = useRuntimeConfig().public.siteUrl || getRequestURL(event).origin
  const person = await invitePerson(useDb(), body, auditContext(event, admin.id), siteUrl)
  setResponseStatus(event, 201)
  return person
})

import { endSession } from '../../services/sessions'

export default defineEventHandler(async (event) => {
  const user = await requireRole(event)
  const { secure } = await getUserSession(event)
  if (secure?.sessionId) await endSession(useDb(), secure.sessionId, 'signed out')
  await clearUserSession(event)
  await audit(event, { action: 'sign-out', subjectType: 'person', subjectId: user.id }, user.id)
  setResponseStatus(event, 204)
  return null
})

export default defineEventHandler(async (event) => {
  const user = await requireRole(event)
  await clearUserSession(event)
  await audit(event, { action: 'sign-out', subjectType: 'person', subjectId: user.id }, user.id)
  setResponseStatus(event, 204)
  return null
})

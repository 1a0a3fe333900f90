// Every /api request of a signed-in person checks the person is still active: a deactivated person's
// session is cleared and answered 401 at once. Changed roles are written into the session on the same request.
import { checkSession } from '../services/sign-in'

export default defineEventHandler(async (event) => {
  if (!event.path.startsWith('/api/')) return
  const session = await getUserSession(event)
  if (!session.user) return
  const check = await checkSession(useDb(), session.user.id, session.secure?.sessionVersion)
  if (check.state === 'current') return
  if (check.state === 'refused') {
    const personId = session.user.id
    await clearUserSession(event)
    await audit(event, { action: 'access.refused', status: 401, subjectType: 'person', subjectId: personId, detail: { reason: check.reason } }, personId)
    throw createError({ statusCode: 401, statusMessage: 'Your account is deactivated' })
  }
  await replaceUserSession(event, {
    user: check.signedIn.user,
    secure: { sessionVersion: check.signedIn.sessionVersion },
    loggedInAt: session.loggedInAt,
  })
})

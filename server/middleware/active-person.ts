// Every /api request that carries a session checks it against the `sessions` table (server/services/sessions.ts):
// an unknown, revoked, idle or expired session, or one of a deactivated person, is cleared and answered 401,
// and the refusal is audited. Routes that take no session (signing in, accepting an invitation, verifying a PDF) go on signed out
// instead, so a browser holding a dead cookie can still sign in. A live session gets the person's current name.
import { checkSession } from '../services/sessions'

const signedOutRoutes = ['/api/auth/login', '/api/invitations/', '/api/auth/reset', '/api/verify']

export default defineEventHandler(async (event) => {
  if (!event.path.startsWith('/api/')) return
  const session = await getUserSession(event)
  if (!session.user) return
  const check = await checkSession(useDb(), session.secure?.sessionId)
  if (check.state === 'ended') {
    const personId = check.personId ?? session.user.id
    await clearUserSession(event)
    if (signedOutRoutes.some((route) => event.path.startsWith(route))) {
      await audit(event, { action: 'session.ended', subjectType: 'person', subjectId: personId, detail: { reason: check.reason } }, check.personId)
      return
    }
    await audit(event, { action: 'access.refused', status: 401, subjectType: 'person', subjectId: personId, detail: { reason: check.reason } }, check.personId)
    throw createError({
      statusCode: 401,
      statusMessage: check.reason === 'deactivated' ? 'Your account is deactivated' : 'Your session has ended; sign in again',
    })
  }
  if (JSON.stringify(check.person) !== JSON.stringify(session.user)) {
    await replaceUserSession(event, { user: check.person, secure: session.secure, loggedInAt: session.loggedInAt })
  }
})

import { loginSchema } from '../../../shared/schemas/auth'
import { signIn } from '../../services/sign-in'

export default defineEventHandler(async (event) => {
  const body = await readValidatedBody(event, parseWith(loginSchema))
  const previous = await getUserSession(event)
  const { user, sessionId } = await withRetryAfter(event, () =>
    signIn(useDb(), body, auditContext(event, null), {
      passwords: { verify: verifyPassword, hash: hashPassword },
      previousSessionId: previous.secure?.sessionId,
    }),
  )
  // replace, not set: setUserSession merges into an earlier session, and would merge the roles arrays too.
  await replaceUserSession(event, { user, secure: { sessionId }, loggedInAt: new Date().toISOString() })
  return { user }
})

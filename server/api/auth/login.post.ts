import { loginSchema } from '../../../shared/schemas/auth'
import { signIn } from '../../services/sign-in'

export default defineEventHandler(async (event) => {
  const body = await readValidatedBody(event, parseWith(loginSchema))
  const { user, sessionVersion } = await signIn(useDb(), body, auditContext(event, null), verifyPassword)
  // replace, not set: setUserSession merges into an earlier session, and would merge the roles arrays too.
  await replaceUserSession(event, { user, secure: { sessionVersion }, loggedInAt: new Date().toISOString() })
  return { user }
})

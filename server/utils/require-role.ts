// Authorisation of API handlers. Every refusal (401, 403) is written to the audit trail (product.md).
import type { H3Event } from 'h3'
import type { User } from '#auth-utils'
import type { Role } from '../../shared/schemas/roles'

/** Refuses the request, after recording the refusal. */
export async function refuse(event: H3Event, status: 401 | 403, message: string, detail: Record<string, unknown> = {}): Promise<never> {
  await audit(event, { action: 'access.refused', status, detail: { reason: message, ...detail } })
  throw createError({ statusCode: status, statusMessage: message })
}

/**
 * The signed-in person, when they hold at least one of `roles` (any signed-in person when none are named).
 * 401 when signed out, 403 otherwise.
 */
export async function requireRole(event: H3Event, ...roles: Role[]): Promise<User> {
  const { user } = await getUserSession(event)
  if (!user) return refuse(event, 401, 'Sign in first')
  if (roles.length > 0 && !roles.some((role) => user.roles.includes(role))) {
    return refuse(event, 403, 'Your roles do not allow this', { needs: roles, holds: user.roles })
  }
  return user
}

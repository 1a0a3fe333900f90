import type { Role } from '#shared/schemas/roles'

/** The person of the session, as DEVELOPERS.md fixes its shape. */
export interface SessionPerson {
  id: number
  name: string
  email: string
  roles: Role[]
  organisationId: number | null
}

export function useCurrentPerson() {
  const { user, loggedIn, fetch: refreshSession } = useUserSession()
  const person = computed(() => (user.value ?? null) as SessionPerson | null)
  const roles = computed<Role[]>(() => person.value?.roles ?? [])
  function hasRole(...wanted: Role[]) {
    return wanted.some((role) => roles.value.includes(role))
  }
  return { person, roles, loggedIn, hasRole, refreshSession }
}

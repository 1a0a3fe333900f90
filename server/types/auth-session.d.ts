// The session's shape (DEVELOPERS.md, "The session"), for nuxt-auth-utils' types.
import type { Role } from '../../shared/schemas/roles'

declare module '#auth-utils' {
  interface User {
    id: number
    name: string
    email: string
    roles: Role[]
    organisationId: number | null
  }
  interface SecureSessionData {
    /** people.session_version when the session was written; a change means roles or the active flag moved. */
    sessionVersion: number
  }
}

export {}

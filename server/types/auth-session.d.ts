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
    /** The random id of the server-side session (table `sessions`, which stores only its SHA-256). */
    sessionId: string
  }
}

export {}

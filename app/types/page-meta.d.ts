import type { Role } from '#shared/schemas/roles'

// What a page may declare in definePageMeta, read by app/middleware.
declare module '#app' {
  interface PageMeta {
    /** Open to signed-out people (sign-in, invitation). */
    public?: boolean
    /** Roles of which a person needs at least one to open the page (middleware 'role'). */
    roles?: Role[]
  }
}

export {}

import type { Role } from '#shared/schemas/roles'

// What a page may declare in definePageMeta, read by app/middleware.
declare module '#app' {
  interface PageMeta {
    /** Open to signed-out people (sign-in, invitation). */
    public?: boolean
    /** Roles of which a person needs at least one to open the page (middleware 'role'). */
    roles?: Role[]
    /** Opens without a session when it carries a render token (the PDF renderer: the print view). */
    renderable?: boolean
  }
}

export {}

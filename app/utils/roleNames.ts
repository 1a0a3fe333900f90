import type { Role } from '#shared/schemas/roles'

/** The words the screens use for each role of product.md. */
export const roleNames: Record<Role, string> = {
  admin: 'Administrator',
  engineer: 'Engineer',
  checker: 'Checker',
  client: 'Client',
}

export const statusNames = {
  active: 'Active',
  invited: 'Invited, no password yet',
  deactivated: 'Deactivated',
} as const

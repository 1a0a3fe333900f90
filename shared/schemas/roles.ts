import { z } from 'zod'

/** The four roles of product.md. A person may hold several. */
export const roles = ['admin', 'engineer', 'checker', 'client'] as const
export type Role = (typeof roles)[number]
export const roleSchema = z.enum(roles)

/** The role a person holds on one project. */
export const projectRoles = ['engineer', 'checker', 'client'] as const
export type ProjectRole = (typeof projectRoles)[number]
export const projectRoleSchema = z.enum(projectRoles)

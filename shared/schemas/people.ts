import { z } from 'zod'
import { emailSchema } from './auth'
import { roles, roleSchema } from './roles'
import { listQuerySchema } from './lists'
import { idSchema, storable } from './text'

export const personNameSchema = storable(
  z
    .string({ required_error: 'Enter the person’s name' })
    .trim()
    .min(2, 'A name has at least 2 characters')
    .max(120, 'A name has at most 120 characters'),
)

/** POST /api/people/invite: the admin's invitation form. */
export const inviteSchema = z
  .object({
    name: personNameSchema,
    email: emailSchema,
    roles: z.array(roleSchema).min(1, 'Choose at least one role').max(roles.length),
    /** Required when `roles` holds `client`: the person's client organisation. */
    organisationId: idSchema.nullable().optional(),
  })
  .refine((body) => !body.roles.includes('client') || body.organisationId, {
    message: 'A client contact belongs to a client organisation',
    path: ['organisationId'],
  })
export type InviteBody = z.infer<typeof inviteSchema>

/** PATCH /api/people/[id] */
export const personUpdateSchema = z
  .object({
    roles: z.array(roleSchema).min(1, 'Choose at least one role').max(roles.length).optional(),
    active: z.boolean().optional(),
    name: personNameSchema.optional(),
  })
  .refine((body) => Object.keys(body).length > 0, { message: 'Nothing to change' })
export type PersonUpdateBody = z.infer<typeof personUpdateSchema>

/** GET /api/people */
export const peopleQuerySchema = listQuerySchema(['name', 'email', 'createdAt'] as const).extend({
  role: z.enum(['admin', 'engineer', 'checker', 'client']).optional(),
  status: z.enum(['active', 'invited', 'deactivated']).optional(),
})

/** One row of GET /api/people. */
export interface PersonRow {
  id: number
  name: string
  email: string
  roles: Array<'admin' | 'engineer' | 'checker' | 'client'>
  status: 'active' | 'invited' | 'deactivated'
  organisationId: number | null
  organisationName: string | null
  createdAt: string
}

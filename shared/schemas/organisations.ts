import { z } from 'zod'
import { listQuerySchema } from './lists'
import { storable } from './text'

/** POST /api/organisations: a client organisation. (The firm itself is in firm settings.) */
export const organisationSchema = z.object({
  name: storable(
    z
      .string({ required_error: 'Enter the organisation’s name' })
      .trim()
      .min(2, 'A name has at least 2 characters')
      .max(160, 'A name has at most 160 characters'),
  ),
})
export type OrganisationBody = z.infer<typeof organisationSchema>

export const organisationsQuerySchema = listQuerySchema(['name', 'createdAt'] as const)

export interface OrganisationRow {
  id: number
  name: string
  projectCount: number
  contactCount: number
  createdAt: string
}

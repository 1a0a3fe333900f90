import { z } from 'zod'
import { listQuerySchema } from './lists'
import { projectRoleSchema } from './roles'
import { idField, storable } from './text'

/** POST /api/projects */
export const projectSchema = z.object({
  number: z
    .string({ required_error: 'Enter the project number' })
    .trim()
    .min(1, 'Enter the project number')
    .max(40, 'A project number has at most 40 characters')
    .regex(/^[A-Za-z0-9][A-Za-z0-9._/-]*$/, 'Use letters, digits and . _ / - only'),
  name: storable(
    z
      .string({ required_error: 'Enter the project name' })
      .trim()
      .min(2, 'A name has at least 2 characters')
      .max(200, 'A name has at most 200 characters'),
  ),
  organisationId: idField('Choose the client'),
})
export type ProjectBody = z.infer<typeof projectSchema>

/** POST /api/projects/[id]/members */
export const memberSchema = z.object({
  personId: idField('Choose a person'),
  role: projectRoleSchema,
})
export type MemberBody = z.infer<typeof memberSchema>

export const projectsQuerySchema = listQuerySchema(['number', 'name', 'createdAt'] as const)

export interface ProjectRow {
  id: number
  number: string
  name: string
  organisationId: number
  organisationName: string
  memberCount: number
  createdAt: string
}

export interface ProjectMember {
  personId: number
  name: string
  email: string
  role: 'engineer' | 'checker' | 'client'
}

export interface ProjectDetail extends ProjectRow {
  members: ProjectMember[]
}

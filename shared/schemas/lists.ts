import { z } from 'zod'

/**
 * Query of every server-side table: sort, filter and page.
 * `sort` is checked against each route's own list of sortable columns.
 */
export function listQuerySchema<const S extends readonly [string, ...string[]]>(sortable: S) {
  return z.object({
    q: z.string().trim().max(200).optional().default(''),
    sort: z.enum(sortable).optional().default(sortable[0]),
    dir: z.enum(['asc', 'desc']).optional().default('asc'),
    page: z.coerce.number().int().min(1).optional().default(1),
    pageSize: z.coerce.number().int().min(1).max(100).optional().default(20),
  })
}

/** Answer of every list route. */
export interface Page<T> {
  items: T[]
  total: number
  page: number
  pageSize: number
}

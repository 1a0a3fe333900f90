import { z } from 'zod'
import { storable } from './text'

/** The largest page size a list answers. */
export const MAX_PAGE_SIZE = 100
/**
 * The last page a list answers: page × page size stays at most 1,000,000 rows, an offset PostgreSQL handles at
 * once (past it the number would be no use to a person paging through a table anyway).
 */
export const MAX_PAGE = 10_000

/** A whole number of a query string: decimal digits only (no exponent, sign or fraction, which `Number()` would read). */
const queryNumber = (max: number, what: string) =>
  z.preprocess(
    (value) => (typeof value === 'number' ? String(value) : value),
    z
      .string({ invalid_type_error: `Give the ${what} once, as a whole number` })
      .regex(/^[0-9]{1,9}$/, `The ${what} is a whole number`)
      .transform(Number)
      .pipe(z.number().int().min(1, `The ${what} is at least 1`).max(max, `The ${what} is at most ${max}`)),
  )

/**
 * Query of every server-side table: sort, filter and page.
 * `sort` is checked against each route's own list of sortable columns.
 */
export function listQuerySchema<const S extends readonly [string, ...string[]]>(sortable: S) {
  return z.object({
    q: storable(z.string({ invalid_type_error: 'Give the search once' }).trim().max(200)).optional().default(''),
    sort: z.enum(sortable).optional().default(sortable[0]),
    dir: z.enum(['asc', 'desc']).optional().default('asc'),
    page: queryNumber(MAX_PAGE, 'page').optional().default(1),
    pageSize: queryNumber(MAX_PAGE_SIZE, 'page size').optional().default(20),
  })
}

/** Answer of every list route. */
export interface Page<T> {
  items: T[]
  total: number
  page: number
  pageSize: number
}

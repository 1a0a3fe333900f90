// The search box of every list: a term matched anywhere in any of some columns, case-insensitively.
import { ilike, or, type Column, type SQL } from 'drizzle-orm'

/**
 * The ILIKE pattern that finds `term` anywhere, with its own `%`, `_` and `\` taken literally: backslash is
 * PostgreSQL's default LIKE escape character. drizzle-orm binds the pattern as it is given and has no helper
 * for this (its issue 444 asks for one and is open), so the three characters are escaped here.
 */
export function containsPattern(term: string): string {
  return `%${term.replace(/[\\%_]/g, '\\$&')}%`
}

/** Rows where any of `columns` holds `term`. */
export function matchesTerm(term: string, columns: Array<Column | SQL>): SQL {
  const pattern = containsPattern(term)
  return or(...columns.map((column) => ilike(column, pattern)))!
}

import { z } from 'zod'

/**
 * Text that PostgreSQL and every screen can hold: no NUL character (text and jsonb columns refuse it) and
 * well-formed UTF-16 (a lone surrogate cannot be encoded as UTF-8). Every schema's free text goes through this.
 */
export function isStorableText(value: string): boolean {
  return !value.includes('\u0000') && value.isWellFormed()
}

export const storableTextMessage = 'This text holds a character that cannot be stored (a NUL or a broken Unicode character)'

/** Adds the storable-text refinement to a string schema that keeps its own messages (and trimming, or none). */
export function storable<S extends z.ZodType<string, z.ZodTypeDef, string>>(schema: S) {
  return schema.refine(isStorableText, storableTextMessage)
}

/** A trimmed string of at most `max` characters, storable; `min` characters at least (default 0). */
export function plainText(max: number, min = 0, requiredMessage = 'Enter some text') {
  return z
    .string({ required_error: requiredMessage, invalid_type_error: 'This must be text' })
    .trim()
    .min(min, min > 0 ? requiredMessage : undefined)
    .max(max, `At most ${max} characters`)
    .refine(isStorableText, storableTextMessage)
}

/** A key of a record in a body (a parameter symbol, a block id, a criterion's name): storable and short. */
export const recordKey = storable(z.string().max(60, 'A name has at most 60 characters'))

/** The largest id PostgreSQL's `integer` (serial) holds. */
export const MAX_ID = 2_147_483_647

/** A row id in a body: a positive 32-bit integer; `choose` is the message when it is missing or not a number. */
export function idField(choose = 'Choose one') {
  return z
    .number({ required_error: choose, invalid_type_error: choose })
    .int('An id is a whole number')
    .positive('An id is positive')
    .max(MAX_ID, 'No such id')
}
export const idSchema = idField()

/**
 * A row id in a route parameter or a query: decimal digits only (no sign, exponent, fraction or spaces, which
 * `Number()` would read), then a positive 32-bit integer.
 */
export const idText = z
  .string({ required_error: 'Enter an id', invalid_type_error: 'An id is a whole number' })
  .regex(/^[1-9][0-9]{0,9}$/, 'An id is a positive whole number')
  .transform(Number)
  .pipe(z.number().max(MAX_ID, 'No such id'))

import { z } from 'zod'

/**
 * Text that PostgreSQL and every screen can hold: no NUL character (text and jsonb columns refuse it) and
 * well-formed UTF-16 (a lone surrogate cannot be encoded as UTF-8). Every schema's free text goes through this.
 */
export function isStorableText(value: string): boolean {
  return !value.includes('\u0000') && value.isWellFormed()
}

export const storableTextMessage = 'This text holds a character that cannot be stored (a NUL or a broken Unicode character)'

/** A trimmed string of at most `max` characters, storable; `min` characters at least (default 0). */
export function plainText(max: number, min = 0, requiredMessage = 'Enter some text') {
  return z
    .string({ required_error: requiredMessage, invalid_type_error: 'This must be text' })
    .trim()
    .min(min, min > 0 ? requiredMessage : undefined)
    .max(max, `At most ${max} characters`)
    .refine(isStorableText, storableTextMessage)
}

/** The largest id PostgreSQL's `integer` (serial) holds. */
export const MAX_ID = 2_147_483_647

/** A row id in a body: a positive 32-bit integer. */
export const idSchema = z
  .number({ required_error: 'Choose one', invalid_type_error: 'Choose one' })
  .int('An id is a whole number')
  .positive('An id is positive')
  .max(MAX_ID, 'No such id')

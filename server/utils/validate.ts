// Validation of bodies, queries and route parameters with the shared zod schemas.
// Bad input answers 400 with `data.issues` = zod's flattened errors ({ formErrors, fieldErrors }), which
// the forms show beside their fields (DEVELOPERS.md, "API").
import { z, type ZodTypeAny } from 'zod'
import { idText } from '../../shared/schemas/text'

/** A validator for h3's readValidatedBody / getValidatedQuery / getValidatedRouterParams. */
export function parseWith<S extends ZodTypeAny>(schema: S) {
  return (input: unknown): z.output<S> => {
    const result = schema.safeParse(input)
    if (result.success) return result.data
    // h3 wraps what the validator throws as `data` of its 400 answer.
    throw { message: 'Some fields need attention', issues: result.error.flatten() }
  }
}

/**
 * Like parseWith, and the answer's `data.field` names the first field at fault as a dotted path
 * (`document.loop.blocks.P.den`), the way the engine's refusals name theirs.
 */
export function parseNamingField<S extends ZodTypeAny>(schema: S) {
  return (input: unknown): z.output<S> => {
    const result = schema.safeParse(input)
    if (result.success) return result.data
    const first = result.error.issues[0]
    // A key the schema does not know is named itself, not its parent object.
    const path = first?.code === 'unrecognized_keys' ? [...first.path, first.keys[0]] : (first?.path ?? [])
    throw {
      message: 'Some fields need attention',
      field: path.join('.'),
      fieldMessage: first?.message ?? '',
      issues: result.error.flatten(),
    }
  }
}

/** Route parameter `[id]` (and `[personId]`): a positive 32-bit integer written in decimal digits. */
export const idParams = z.object({ id: idText })
export const memberParams = idParams.extend({ personId: idText })

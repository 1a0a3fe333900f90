// POST /api/tuning (issue 10, item 3): a named tuning rule applied to a first-order-plus-dead-time model.
import { createError } from 'h3'
import { TuningError, type TuningResult, tune } from '../../shared/calc/tuning'
import type { TuningBody } from '../../shared/schemas/step-test'

/** The rule's settings; a model the rule cannot tune (no dead time for Ziegler–Nichols, no λ for lambda) answers 400 naming the field. */
export function tuneController(body: TuningBody): TuningResult {
  try {
    return tune(body)
  } catch (error) {
    if (error instanceof TuningError)
      throw createError({ statusCode: 400, statusMessage: 'The rule does not apply', message: error.message, data: { field: error.field, message: error.message } })
    throw error
  }
}

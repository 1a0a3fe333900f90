// Services answer a refusal as a value (server/services/sheets.ts, `Refused`); the route records and answers it.
import type { H3Event } from 'h3'
import { isRefused, type Refused } from '../services/sheets'

/** The outcome, unless the service refused: then the refusal is audited and answered 403. */
export async function unlessRefused<T>(event: H3Event, outcome: T | Refused): Promise<T> {
  if (isRefused(outcome)) return refuse(event, 403, outcome.refused, outcome.detail)
  return outcome
}

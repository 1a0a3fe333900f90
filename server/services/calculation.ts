// POST /api/calculate's work: the per-person limits, then the engine in the worker pool (calc-contract.md).
// The limits are kept in memory, per app process (DEVELOPERS.md): with several app servers each counts its own.
import { createError } from 'h3'
import { calculateInPool, calculationsInFlight } from '../utils/calc-pool'

/**
 * Per person: calculations running or waiting at once, and started within a minute. The workbench (and the
 * sheet editor) recompute as the engineer types and withdraw the previous request when a new one starts,
 * so a person typing has one or two in flight and makes a few a second; 240 a minute is four a second
 * sustained, twice the fastest editor's pace.
 */
export const CALCULATIONS_IN_FLIGHT = 3
export const CALCULATIONS_PER_MINUTE = 240
const MINUTE_MS = 60_000

/** Start times of each person's calculations within the last minute, oldest first. */
const started = new Map<number, number[]>()

function recent(personId: number, now: number): number[] {
  const times = (started.get(personId) ?? []).filter((t) => now - t < MINUTE_MS)
  if (times.length === 0) started.delete(personId)
  else started.set(personId, times)
  return times
}

/** Seconds until the person may start another calculation, or 0 when they may now. */
function waitBeforeNext(personId: number, now: number): { seconds: number; reason: string } | null {
  if (calculationsInFlight(String(personId)) >= CALCULATIONS_IN_FLIGHT)
    return { seconds: 1, reason: `you already have ${CALCULATIONS_IN_FLIGHT} calculations running or waiting` }
  const times = recent(personId, now)
  if (times.length >= CALCULATIONS_PER_MINUTE) {
    const oldest = times[times.length - CALCULATIONS_PER_MINUTE]!
    return { seconds: Math.max(1, Math.ceil((oldest + MINUTE_MS - now) / 1000)), reason: `you started ${CALCULATIONS_PER_MINUTE} calculations within a minute` }
  }
  return null
}

export interface CalculationRequest {
  personId: number
  text: string
  /** Aborted when the sender gives the request up. */
  signal?: AbortSignal
  /** Told the seconds to wait when the request is refused for the person's limits (the Retry-After header). */
  retryAfter: (seconds: number) => void
}

export async function calculate({ personId, text, signal, retryAfter }: CalculationRequest): Promise<unknown> {
  const now = Date.now()
  const wait = waitBeforeNext(personId, now)
  if (wait) {
    retryAfter(wait.seconds)
    const message = `Too many calculations: ${wait.reason}; try again in ${wait.seconds} s.`
    throw createError({ statusCode: 429, statusMessage: 'Too many calculations', message, data: { message, retryAfter: wait.seconds } })
  }
  started.set(personId, [...recent(personId, now), now])

  const reply = await calculateInPool(text, String(personId), signal)
  if (reply.ok) return reply.result
  if (reply.kind === 'input') {
    throw createError({ statusCode: 400, statusMessage: 'Bad loop file', message: reply.message, data: { field: reply.field, message: reply.message } })
  }
  if (reply.kind === 'timeout') {
    throw createError({ statusCode: 422, statusMessage: 'Computation stopped', message: reply.message, data: { message: reply.message } })
  }
  if (reply.kind === 'busy') {
    retryAfter(2)
    throw createError({ statusCode: 503, statusMessage: 'Busy', message: reply.message, data: { message: reply.message } })
  }
  if (reply.kind === 'cancelled') {
    // Nobody reads this answer: the sender closed the request.
    throw createError({ statusCode: 499, statusMessage: 'Withdrawn', message: reply.message, data: { message: reply.message } })
  }
  throw createError({ statusCode: 500, statusMessage: 'Computation failed', message: reply.message, data: { message: reply.message } })
}

// Limits per person (or per client address, for routes open to everyone) on routes a signed-in person could otherwise call without end.
// The counts live in this server process's memory (rate-limiter-flexible's RateLimiterMemory): a restart starts
// them afresh, and were the app run as several processes each would keep its own. Acceptable for the one
// process Loopwright runs as; a shared store (PostgreSQL) would be needed beyond that.
import type { H3Event } from 'h3'
import { RateLimiterMemory, RateLimiterRes } from 'rate-limiter-flexible'

/** POST /api/audit/page-refusals: 20 a minute per person, ample for a person clicking through refused pages. */
export const pageRefusalLimit = new RateLimiterMemory({ keyPrefix: 'page-refusals', points: 20, duration: 60 })

/**
 * POST /api/verify: 30 lookups in 5 minutes per client address, ample for someone checking a stack of received
 * PDFs by hand (a 20-sheet package and its sheets), and far too few to search the issued hashes.
 */
export const verifyLimit = new RateLimiterMemory({ keyPrefix: 'verify', points: 30, duration: 300 })

/**
 * Takes one from `key`'s allowance, or answers 429 with `Retry-After` (whole seconds until the allowance is back).
 * A 429 is not written to the audit trail: the limit is there to keep the trail from being flooded.
 */
export async function takeFromLimit(event: H3Event, limiter: RateLimiterMemory, key: string | number): Promise<void> {
  try {
    await limiter.consume(String(key))
  } catch (refusal) {
    if (!(refusal instanceof RateLimiterRes)) throw refusal
    const retryAfterSeconds = Math.max(1, Math.ceil(refusal.msBeforeNext / 1000))
    setResponseHeader(event, 'Retry-After', retryAfterSeconds)
    throw createError({ statusCode: 429, statusMessage: 'Too many requests; try again later', data: { retryAfterSeconds } })
  }
}

// A 429 whose `data.retryAfterSeconds` says when to try again also carries it as the Retry-After header
// (RFC 9110 §10.2.3, delay in seconds), which clients and proxies read without knowing our error shape.
import { isError, type H3Event } from 'h3'

export async function withRetryAfter<T>(event: H3Event, work: () => Promise<T>): Promise<T> {
  try {
    return await work()
  } catch (failure) {
    const seconds = isError(failure) && failure.statusCode === 429 ? (failure.data as { retryAfterSeconds?: unknown } | undefined)?.retryAfterSeconds : undefined
    if (typeof seconds === 'number') setResponseHeader(event, 'Retry-After', seconds)
    throw failure
  }
}

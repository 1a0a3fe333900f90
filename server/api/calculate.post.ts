import { calculate } from '../services/calculation'

/** POST /api/calculate: a loop file in, the contract's result out (calc-contract.md). Not for clients (product.md). */
export default defineEventHandler(async (event) => {
  const user = await requireRole(event, 'engineer', 'checker', 'admin')
  // The request guard has read the body already, stopping at this route's limit (server/utils/request-limits.ts).
  const text = (await readRawBody(event, 'utf8')) ?? ''
  // A request its sender gives up (the workbench withdraws the last one as the engineer types) leaves the queue.
  const withdrawn = new AbortController()
  event.node.res.once('close', () => {
    if (!event.node.res.writableFinished) withdrawn.abort()
  })
  return calculate({
    personId: user.id,
    text,
    signal: withdrawn.signal,
    retryAfter: (seconds) => setResponseHeader(event, 'retry-after', seconds),
  })
})

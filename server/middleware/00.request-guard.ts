// Runs first on every state-changing request (DEVELOPERS.md, "Requests the server refuses"):
//  - another site's Origin: 403, audited (a cross-site form post must change nothing);
//  - an /api body that is not application/json: 415 (NON_JSON_ROUTES lists the exceptions: the attachment upload);
//  - an /api body past its route's limit: 413 naming the field, reading stopped at the limit, chunked or not.
// The body read here is handed to h3's readBody/readRawBody as `rawBody`, so routes read it as usual.
import type { IncomingMessage } from 'node:http'

const STATE_CHANGING = new Set(['POST', 'PUT', 'PATCH', 'DELETE'])

export default defineEventHandler(async (event) => {
  if (!STATE_CHANGING.has(event.method)) return
  if (!fromOwnOrigin(event)) {
    return refuse(event, 403, 'Requests from other sites are refused', { origin: getRequestHeader(event, 'origin') })
  }
  const path = event.path.split('?')[0] ?? event.path
  if (!path.startsWith('/api/') || !hasBody(event.node.req)) return

  const mediaType = (getRequestHeader(event, 'content-type') ?? '').split(';')[0]!.trim().toLowerCase()
  const key = limitKeyOf(path)
  const accepted = NON_JSON_ROUTES[key] ?? ['application/json']
  if (!accepted.includes(mediaType)) {
    const message = `Send the body as ${accepted.join(' or ')}${mediaType ? `, not ${mediaType}` : ''}`
    throw createError({ statusCode: 415, statusMessage: 'Unsupported media type', message, data: { message } })
  }

  const limit = BODY_LIMITS[key] ?? { bytes: GENERAL_BODY_BYTES, field: 'body', what: `the limit of ${GENERAL_BODY_BYTES / 1024} KiB` }
  try {
    ;(event.node.req as IncomingMessage & { rawBody?: Buffer }).rawBody = await readBodyWithin(event, limit.bytes)
  } catch (error) {
    if (!(error instanceof BodyTooLargeError)) throw error
    discardRest(event.node.req)
    const message = `${limit.field}: the body is above ${limit.what} and was not read (reading stops at ${limit.bytes / 1024} KiB)`
    throw createError({ statusCode: 413, statusMessage: 'Payload too large', message, data: { field: limit.field, message } })
  }
})

/**
 * The rest of a refused body is thrown away as it arrives, never kept, while the answer goes out at once. Closing
 * the connection instead (as this did first) makes the kernel reset it while the sender is still sending, and the
 * sender, a browser or fetch, then loses the 413 and reports a broken connection (EPIPE, measured in the server
 * tests). A sender that goes on past DISCARD_MS has its connection closed.
 */
const DISCARD_MS = 10_000
function discardRest(request: IncomingMessage) {
  const timer = setTimeout(() => request.socket.destroy(), DISCARD_MS)
  timer.unref()
  request.on('end', () => clearTimeout(timer))
  request.on('close', () => clearTimeout(timer))
  request.on('data', () => undefined)
  request.resume()
}

function hasBody(request: IncomingMessage): boolean {
  return Number(request.headers['content-length'] ?? 0) > 0 || request.headers['transfer-encoding'] !== undefined
}

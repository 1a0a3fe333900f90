// Reading a request body without ever holding more than a limit of it.
import type { H3Event } from 'h3'

export class BodyTooLargeError extends Error {
  constructor(readonly limit: number) {
    super(`the body is above the limit of ${limit} bytes`)
  }
}

/**
 * The body, read from the stream until `limit` bytes; past the limit reading stops at once, whatever
 * Content-Length says or omits (a chunked body declares nothing). A declared length past the limit is
 * refused before a byte is read. The connection is closed after the refusal, so the rest is never read.
 */
export function readBodyWithin(event: H3Event, limit: number): Promise<Buffer> {
  const request = event.node.req
  const declared = Number(request.headers['content-length'])
  if (Number.isFinite(declared) && declared > limit) return Promise.reject(new BodyTooLargeError(limit))
  return new Promise((resolve, reject) => {
    const chunks: Buffer[] = []
    let size = 0
    const onData = (chunk: Buffer) => {
      size += chunk.length
      if (size > limit) {
        cleanup()
        request.pause()
        reject(new BodyTooLargeError(limit))
        return
      }
      chunks.push(chunk)
    }
    const onEnd = () => {
      cleanup()
      resolve(Buffer.concat(chunks))
    }
    const onError = (error: Error) => {
      cleanup()
      reject(error)
    }
    const cleanup = () => {
      request.off('data', onData)
      request.off('end', onEnd)
      request.off('error', onError)
    }
    request.on('data', onData)
    request.on('end', onEnd)
    request.on('error', onError)
  })
}

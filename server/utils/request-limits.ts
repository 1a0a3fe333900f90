// What the request guard (server/middleware/00.request-guard.ts) accepts on state-changing requests.
import { MAX_FILE_BYTES } from '../../shared/calc/limits'
import { MAX_ATTACHMENT_BYTES } from '../../shared/schemas/attachments'

/** Largest body any JSON route reads, in bytes. */
export const GENERAL_BODY_BYTES = 1024 * 1024

/**
 * Routes that read more or less than the general limit, and the field their 413 names; a path written with `[id]`
 * stands for any one segment there (`/api/sheets/12/attachments`). /api/calculate reads up to four times the loop
 * file's limit, so that a file just past 256 KiB gets the engine's own 400 naming `file` (calc-contract.md, "Bad
 * input"), and anything far past it is never read at all. The upload of an attachment reads a file of up to 25 MiB
 * and the multipart framing around it, likewise: a file just past the limit gets the service's own 413 with its size.
 */
export const BODY_LIMITS: Record<string, { bytes: number; field: string; what: string }> = {
  '/api/calculate': { bytes: 4 * MAX_FILE_BYTES, field: 'file', what: `the limit of ${MAX_FILE_BYTES / 1024} KiB of a loop file` },
  '/api/sheets/[id]/attachments': { bytes: MAX_ATTACHMENT_BYTES + 64 * 1024, field: 'file', what: `the limit of ${MAX_ATTACHMENT_BYTES / 1024 / 1024} MiB of an attachment` },
}

/** Routes that take something other than JSON, by path (as in BODY_LIMITS), with the media types they take. */
export const NON_JSON_ROUTES: Record<string, string[]> = {
  '/api/sheets/[id]/attachments': ['multipart/form-data'],
}

/** The key of `path` in these tables (`/api/sheets/[id]/attachments` for `/api/sheets/12/attachments`); else `path`. */
export function limitKeyOf(path: string): string {
  if (path in NON_JSON_ROUTES || path in BODY_LIMITS) return path
  const segments = path.split('/')
  for (const key of new Set([...Object.keys(NON_JSON_ROUTES), ...Object.keys(BODY_LIMITS)])) {
    const pattern = key.split('/')
    const fits = pattern.length === segments.length && pattern.every((part, i) => part === segments[i] || (/^\[\w+\]$/.test(part) && segments[i] !== ''))
    if (fits) return key
  }
  return path
}

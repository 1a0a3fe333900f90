// What the request guard (server/middleware/00.request-guard.ts) accepts on state-changing requests.
import { MAX_FILE_BYTES } from '../../shared/calc/limits'

/** Largest body any JSON route reads, in bytes. */
export const GENERAL_BODY_BYTES = 1024 * 1024

/**
 * Routes that read more or less than the general limit, and the field their 413 names. /api/calculate
 * reads up to four times the loop file's limit, so that a file just past 256 KiB gets the engine's own 400
 * naming `file` (calc-contract.md, "Bad input"), and anything far past it is never read at all.
 */
export const BODY_LIMITS: Record<string, { bytes: number; field: string; what: string }> = {
  '/api/calculate': { bytes: 4 * MAX_FILE_BYTES, field: 'file', what: `the limit of ${MAX_FILE_BYTES / 1024} KiB of a loop file` },
}

/**
 * Routes that take something other than JSON, by path, with the media types they take. Empty for now:
 * the upload route of issue 10 (multipart/form-data) goes here, with a size limit of its own in BODY_LIMITS.
 */
export const NON_JSON_ROUTES: Record<string, string[]> = {}

import { verifyBodySchema } from '../../shared/schemas/verify'
import { verifyPdf } from '../services/verify'
import { verifyLimit } from '../utils/rate-limit'

/**
 * POST /api/verify { sha256 }: whether a PDF of that SHA-256 is an issued revision or package issue, and which.
 * Open to everyone, signed in or not (the /verify page). Limited per client address, so the table of issued
 * hashes cannot be searched by brute force; only a well-formed hash spends the allowance (a malformed one is
 * refused before any lookup).
 */
export default defineEventHandler(async (event) => {
  const body = await readValidatedBody(event, parseWith(verifyBodySchema))
  await takeFromLimit(event, verifyLimit, getRequestIP(event) ?? 'unknown')
  setResponseHeader(event, 'cache-control', 'no-store')
  return verifyPdf(useDb(), body.sha256)
})

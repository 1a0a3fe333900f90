// The PDF renderer's pass to the print view (server/services/pdf-render.ts): not a person's session, but a token
// that names one revision (and, during an issue, the issue's words) and expires in a minute. It is an HMAC-SHA256
// over its payload with a key made at random when this process starts and never written anywhere: the renderer
// only ever asks its own process over loopback, so no other process needs the key, and a token cannot outlive the
// process that made it. Only the print view's data route (GET /api/print/[token]) accepts it.
import { createHmac, randomBytes, timingSafeEqual } from 'node:crypto'
import type { PrintIssue } from '../../shared/schemas/print'

const key = randomBytes(32)
const LIFETIME_MS = 60_000

export interface RenderClaims {
  revisionId: number
  /** The issue being made when the revision row does not say issued yet. */
  issue: PrintIssue | null
  expiresAt: number
}

const signatureOf = (payload: string) => createHmac('sha256', key).update(payload).digest('base64url')

export function makeRenderToken(revisionId: number, issue: PrintIssue | null = null, now = Date.now()): string {
  const claims: RenderClaims = { revisionId, issue, expiresAt: now + LIFETIME_MS }
  const payload = Buffer.from(JSON.stringify(claims), 'utf8').toString('base64url')
  return `${payload}.${signatureOf(payload)}`
}

/** The claims of a token this process made and that has not expired; null for anything else. */
export function readRenderToken(token: string, now = Date.now()): RenderClaims | null {
  const [payload, signature, ...rest] = token.split('.')
  if (!payload || !signature || rest.length) return null
  const expected = Buffer.from(signatureOf(payload))
  const given = Buffer.from(signature)
  if (given.length !== expected.length || !timingSafeEqual(given, expected)) return null
  try {
    const claims = JSON.parse(Buffer.from(payload, 'base64url').toString('utf8')) as RenderClaims
    return Number.isInteger(claims.revisionId) && typeof claims.expiresAt === 'number' && claims.expiresAt > now ? claims : null
  } catch {
    return null
  }
}

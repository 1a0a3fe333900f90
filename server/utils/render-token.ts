// The PDF renderer's pass to the print view (server/services/pdf-render.ts): not a person's session, but a token
// that names one revision (and, during an issue, the issue's words) and expires in a minute. It is an HMAC-SHA256
// over its payload with a key made at random when this process starts and never written anywhere: the renderer
// only ever asks its own process over loopback, so no other process needs the key, and a token cannot outlive the
// process that made it. Only the print view's data route (GET /api/print/[token]) accepts it.
import { createHmac, randomBytes, timingSafeEqual } from 'node:crypto'
import type { PrintCover, PrintIssue } from '../../shared/schemas/print'

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

// A package's cover sheet is drawn from what the package render has just worked out (each sheet's pages, the
// labels of the issue being made), which no table holds yet. So its token names an entry kept in this process's
// memory for the same minute, made by the renderer and read only by GET /api/package-print/[token].
const covers = new Map<string, { cover: PrintCover; expiresAt: number }>()

export function makeCoverToken(cover: PrintCover, now = Date.now()): string {
  for (const [token, entry] of covers) if (entry.expiresAt <= now) covers.delete(token)
  const token = randomBytes(32).toString('base64url')
  covers.set(token, { cover, expiresAt: now + LIFETIME_MS })
  return token
}

/** The cover a token of this process names, while it lives; null for anything else. */
export function readCoverToken(token: string, now = Date.now()): PrintCover | null {
  const entry = covers.get(token)
  return entry && entry.expiresAt > now ? entry.cover : null
}

/** The renderer lets go of a cover once it is printed. */
export function dropCoverToken(token: string): void {
  covers.delete(token)
}

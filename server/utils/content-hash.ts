// The hash a signature binds to: SHA-256 (hex) of the document in the canonical JSON form of RFC 8785 (JCS),
// by the npm package `canonicalize`, so the same content always hashes the same, whatever jsonb's key order.
import { createHash } from 'node:crypto'
import canonicalize from 'canonicalize'

export function contentHash(document: unknown): string {
  const canonical = canonicalize(document)
  if (canonical === undefined) throw new Error('This document has no canonical JSON form')
  return createHash('sha256').update(canonical, 'utf8').digest('hex')
}

export const sha256Hex = (bytes: Uint8Array): string => createHash('sha256').update(bytes).digest('hex')

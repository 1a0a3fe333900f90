// The hash a signature binds to (issue 8): SHA-256 (lowercase hex) of the sheet document in the canonical JSON of
// RFC 8785 (JSON Canonicalization Scheme, by the npm package `canonicalize`), so the same content always hashes
// the same, whatever jsonb's key order. The signatures and the printed PDF use this one function.
import { createHash } from 'node:crypto'
import canonicalize from 'canonicalize'

export function contentHash(document: unknown): string {
  const canonical = canonicalize(document)
  if (canonical === undefined) throw new Error('This document has no canonical JSON form')
  return createHash('sha256').update(canonical, 'utf8').digest('hex')
}

export const sha256Hex = (bytes: Uint8Array): string => createHash('sha256').update(bytes).digest('hex')

/** The first 12 hex digits: what a printed page and a person's eye compare (48 bits); one definition, shared with the screens. */
export { shortHash } from '../../shared/schemas/attachments'

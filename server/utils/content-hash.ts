// The content hash a signature binds (issue 8): SHA-256 of the sheet document in the canonical JSON of RFC 8785
// (JSON Canonicalization Scheme, through npm `canonicalize`), as lowercase hex. The flow branch owns the
// signatures; this is the one function both the signatures and the printed PDF use.
import { createHash } from 'node:crypto'
import canonicalize from 'canonicalize'

export function contentHash(document: unknown): string {
  const canonical = canonicalize(document)
  if (canonical === undefined) throw new Error('The document has no JSON form')
  return createHash('sha256').update(canonical, 'utf8').digest('hex')
}

/** The first 12 hex digits: what a printed page and a person's eye compare (48 bits). */
export const shortHash = (hash: string) => hash.slice(0, 12)

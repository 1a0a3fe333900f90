// Secret tokens: session ids, invitation links and password-reset links. Only the holder keeps the token; the
// database stores its SHA-256 (lowercase hex), so a copy of the tables opens no session and follows no link.
import { randomBytes } from 'node:crypto'
import { sha256Hex } from './content-hash'

/** A new token: 32 random bytes (256 bits) in base64url, safe in a URL path and a cookie. */
export const newSecretToken = (): string => randomBytes(32).toString('base64url')

/** What is stored of a token, and what a presented token is looked up by: the SHA-256 of its UTF-8 bytes. */
export const tokenHash = (token: string): string => sha256Hex(Buffer.from(token, 'utf8'))

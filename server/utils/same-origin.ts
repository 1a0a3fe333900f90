// Whether a request's Origin header names this site (the request guard's cross-site check).
import type { H3Event } from 'h3'

/** This site's origins: the one the request itself was addressed to, and NUXT_PUBLIC_SITE_URL's (behind a proxy). */
export function ownOrigins(event: H3Event): string[] {
  const origins = [getRequestURL(event).origin]
  const site = useRuntimeConfig(event).public.siteUrl
  if (site) {
    try {
      origins.push(new URL(site).origin)
    } catch {
      // a malformed site URL names no origin
    }
  }
  return origins
}

/** True when the request carries no Origin header (not a browser's cross-site request) or this site's own. */
export function fromOwnOrigin(event: H3Event): boolean {
  const origin = getRequestHeader(event, 'origin')
  if (origin === undefined) return true
  return ownOrigins(event).includes(origin)
}

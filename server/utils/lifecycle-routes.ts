// What the lifecycle routes hand the service (server/services/lifecycle.ts): links for e-mail, the password check
// of a signature, the PDF renderer of an issue.
import type { H3Event } from 'h3'
import { issueRenderer } from '../services/issue-pdf'
import type { Links, Signing } from '../services/lifecycle'

export function linksOf(event: H3Event): Links {
  return { siteUrl: useRuntimeConfig(event).public.siteUrl || getRequestURL(event).origin }
}

export const signing: Signing = { verify: (hash, plain) => verifyPassword(hash, plain) }

export const renderer = () => issueRenderer(useDb())

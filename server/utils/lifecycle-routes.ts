// What the lifecycle routes hand the service (server/services/lifecycle.ts): links for e-mail, the password check
// of a signature, the PDF renderer of an issue.
import type { H3Event } from 'h3'
import { issueRenderer } from '../services/issue-pdf'
import type { Links, Signing } from '../services/lifecycle'

export function linksOf(event: H3Event): Links {
  return { siteUrl: useRuntimeConfig(event).public.siteUrl || getRequestURL(event).origin }
}

export const signing: Signing = { verify: (hash, plain) => verifyPassword(hash, plain) }

/** The Noto face of the package page numbers, bundled as a server asset (nuxt.config.ts, `print-fonts`). */
async function stampFont(): Promise<Uint8Array> {
  const font = await useStorage('assets:print-fonts').getItemRaw<Uint8Array>('noto-sans-latin-400-normal.woff')
  if (!font) throw new Error('The Noto face for page numbers is missing from the server assets')
  return font instanceof Uint8Array ? font : new Uint8Array(font as ArrayBuffer)
}

export const renderer = () => issueRenderer(stampFont)

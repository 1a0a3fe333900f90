// The API as the tests' own witness: what the browser did is checked against what the server holds.
/// <reference path="../setup/provided.d.ts" />
import { inject } from 'vitest'
import { Agent } from 'undici'

export const baseUrl = () => inject('baseUrl')
export const mailApiUrl = () => inject('mailApiUrl')

/**
 * Signs in over HTTP and returns the session cookie to send with later calls. `from`: the local address to connect
 * from (all of 127.0.0.0/8 is loopback on Linux), to sign in as another client than the browser.
 */
export async function apiSignIn(email: string, password: string, from?: string): Promise<string> {
  const response = await fetch(`${baseUrl()}/api/auth/login`, {
    ...(from ? { dispatcher: new Agent({ localAddress: from }) } : {}),
    method: 'POST',
    headers: { 'content-type': 'application/json' },
    body: JSON.stringify({ email, password }),
  })
  if (!response.ok) throw new Error(`sign-in of ${email} answered ${response.status}`)
  const cookies = response.headers.getSetCookie().map((cookie) => cookie.split(';')[0])
  return cookies.join('; ')
}

export async function api<T = unknown>(cookie: string, path: string, init: { method?: string; body?: unknown } = {}) {
  const response = await fetch(`${baseUrl()}${path}`, {
    method: init.method ?? 'GET',
    headers: { cookie, ...(init.body === undefined ? {} : { 'content-type': 'application/json' }) },
    body: init.body === undefined ? undefined : JSON.stringify(init.body),
  })
  const text = await response.text()
  return { status: response.status, body: (text ? JSON.parse(text) : null) as T }
}

/**
 * POST /api/sheets/[id]/issue as `cookie`'s person and, when it is queued (202), its job polled (GET /api/jobs/[id])
 * to its end: the request's status, the finished job, and `issued`, the job's result once done (else null).
 */
export async function issueSheetAndWait(cookie: string, sheetId: number, body: Record<string, unknown>, timeoutMs = 90_000) {
  const request = await api<{ jobId: number }>(cookie, `/api/sheets/${sheetId}/issue`, { method: 'POST', body })
  if (request.status !== 202) return { status: request.status, job: null, issued: null, answer: request.body as unknown }
  const deadline = Date.now() + timeoutMs
  for (;;) {
    const job = await api<{ status: string; result: { sheetId: number; revisionId: number; status: string; label: string } | null; error: string | null }>(cookie, `/api/jobs/${request.body.jobId}`)
    if (job.status !== 200 || job.body.status === 'done' || job.body.status === 'failed') {
      return { status: request.status, job: job.body, issued: job.body?.status === 'done' ? job.body.result : null, answer: request.body as unknown }
    }
    if (Date.now() > deadline) throw new Error(`the issue job of sheet ${sheetId} had not finished after ${timeoutMs} ms: ${JSON.stringify(job.body)}`)
    await new Promise((resolve) => setTimeout(resolve, 200))
  }
}

interface StoredMessage {
  to: string[]
  subject: string
  text: string
}

/** The one-time link of the newest invitation e-mailed to `email` (the mail sink of DEVELOPERS.md). */
export async function invitationLink(email: string): Promise<string> {
  // The outbox worker sends it, maybe behind other tests' mail: up to a minute.
  for (let attempt = 0; attempt < 240; attempt++) {
    const messages = (await (await fetch(`${mailApiUrl()}/messages?to=${encodeURIComponent(email)}`)).json()) as StoredMessage[]
    const link = messages.map((message) => message.text.match(/https?:\/\/\S+\/invitation\/[\w-]+/)?.[0]).filter(Boolean).at(-1)
    if (link) return link
    await new Promise((resolve) => setTimeout(resolve, 250))
  }
  throw new Error(`no invitation e-mail reached ${email}`)
}

// A small HTTP client for the server tests: one cookie jar per person, JSON in and out.
import { inject } from 'vitest'
import postgres from 'postgres'
import { Agent } from 'undici'
import { request as httpRequest } from 'node:http'
import { demoPassword } from '../../../scripts/demo-people'

export interface Answer<T = any> {
  status: number
  body: T
  headers: Headers
}

const agents = new Map<string, Agent>()
/** Connections bound to a local address (undici's Client option `localAddress`): all of 127.0.0.0/8 is loopback on Linux, so tests can come "from elsewhere". */
function agentFrom(localAddress: string): Agent {
  let agent = agents.get(localAddress)
  if (!agent) agents.set(localAddress, (agent = new Agent({ localAddress })))
  return agent
}

export class Client {
  cookie = ''

  /** `from`: the local address the requests leave from (127.0.0.1 when not given); `headers`: sent with each. */
  constructor(
    readonly from?: string,
    readonly headers: Record<string, string> = {},
  ) {}

  /** `body`: sent as JSON, or as multipart/form-data when it is a FormData (an upload). */
  async request<T = any>(method: string, path: string, body?: unknown): Promise<Answer<T>> {
    const form = body instanceof FormData
    const answer = await fetch(`${inject('baseUrl')}${path}`, {
      ...(this.from ? { dispatcher: agentFrom(this.from) } : {}),
      method,
      headers: {
        ...this.headers,
        // fetch writes a form's own content type, with its boundary.
        ...(body === undefined || form ? {} : { 'content-type': 'application/json' }),
        ...(this.cookie ? { cookie: this.cookie } : {}),
      },
      body: body === undefined ? undefined : form ? body : JSON.stringify(body),
      redirect: 'manual',
    })
    const setCookie = answer.headers.get('set-cookie')
    if (setCookie) this.cookie = setCookie.split(';')[0]!.endsWith('=') ? '' : setCookie.split(';')[0]!
    // A PDF (GET /api/revisions/[id]/pdf) or an attachment (GET /api/attachments/[id]) comes back as its bytes;
    // everything else is JSON.
    if (answer.headers.get('content-type')?.startsWith('application/pdf') || answer.headers.get('content-disposition')?.startsWith('attachment')) {
      return { status: answer.status, body: Buffer.from(await answer.arrayBuffer()) as T, headers: answer.headers }
    }
    const text = await answer.text()
    return { status: answer.status, body: text ? JSON.parse(text) : null, headers: answer.headers }
  }

  /** A request with a body sent as the text given (not JSON-encoded), to try what the server makes of it. */
  async raw<T = any>(method: string, path: string, text: string | undefined, contentType = 'application/json'): Promise<Answer<T>> {
    const answer = await fetch(`${inject('baseUrl')}${path}`, {
      method,
      headers: { 'content-type': contentType, ...(this.cookie ? { cookie: this.cookie } : {}) },
      body: text,
      redirect: 'manual',
    })
    const setCookie = answer.headers.get('set-cookie')
    if (setCookie) this.cookie = setCookie.split(';')[0]!.endsWith('=') ? '' : setCookie.split(';')[0]!
    const body = await answer.text()
    let parsed: unknown = body
    try {
      parsed = body ? JSON.parse(body) : null
    } catch {
      // not JSON: the text itself
    }
    return { status: answer.status, body: parsed as T, headers: answer.headers }
  }

  get<T = any>(path: string) {
    return this.request<T>('GET', path)
  }
  post<T = any>(path: string, body?: unknown) {
    return this.request<T>('POST', path, body ?? {})
  }
  patch<T = any>(path: string, body: unknown) {
    return this.request<T>('PATCH', path, body)
  }
  delete<T = any>(path: string) {
    return this.request<T>('DELETE', path)
  }
  /** POST of one file in the multipart field `file` (POST /api/sheets/[id]/attachments). */
  upload<T = any>(path: string, name: string, bytes: Uint8Array, type = 'application/octet-stream') {
    return this.request<T>('POST', path, formWith(name, bytes, type))
  }
}

/** A multipart form holding one file in the field `file`. */
export function formWith(name: string, bytes: Uint8Array, type = 'application/octet-stream'): FormData {
  const form = new FormData()
  form.append('file', new Blob([bytes], { type }), name)
  return form
}

/**
 * Sends a body the server should refuse before reading it whole, and takes its answer as soon as it comes.
 * The server closes the connection after such an answer, so the rest of the write fails (EPIPE or a reset);
 * fetch reports that as its own error and loses the answer, which is why this uses node:http.
 */
export function sendUnread(path: string, headers: Record<string, string>, body: string): Promise<{ status: number; json: any }> {
  const url = new URL(path, inject('baseUrl'))
  return new Promise((resolve, reject) => {
    let answered = false
    const req = httpRequest({ method: 'POST', hostname: url.hostname, port: url.port, path: url.pathname + url.search, headers }, (res) => {
      answered = true
      let text = ''
      res.on('data', (part) => (text += part))
      res.on('end', () => resolve({ status: res.statusCode ?? 0, json: text ? JSON.parse(text) : null }))
      res.on('error', reject)
    })
    req.on('error', (error) => (answered ? undefined : reject(error)))
    req.end(body)
  })
}

export const demo = {
  admin: 'imogen.varga@example.com',
  engineer: 'tomas.okafor@example.com',
  secondEngineer: 'priya.raman@example.com',
  checker: 'henrik.salo@example.com',
  client: 'dana.whitlock@example.com',
}

export async function signedIn(email: string, password = demoPassword, from?: string): Promise<Client> {
  const client = new Client(from)
  const answer = await client.post('/api/auth/login', { email, password })
  if (answer.status !== 200) throw new Error(`sign-in of ${email} answered ${answer.status}`)
  return client
}

/** A name unique to this run, so tests never depend on each other's rows. */
export function unique(prefix: string): string {
  return `${prefix}${Date.now().toString(36)}${Math.random().toString(36).slice(2, 6)}`
}

let sqlClient: postgres.Sql | undefined
/** Direct access to the test database, to check what the API wrote. */
export function database(): postgres.Sql {
  sqlClient ??= postgres(inject('databaseUrl'), { max: 2, onnotice: () => {} })
  return sqlClient
}

interface MailMessage {
  to: string[]
  subject: string
  text: string
}

/** Every mail goes through the outbox, whose worker may have other tests' mail in hand: a minute before giving up. */
const deliveryPolls = 600

/** The messages the sink holds for `address`, once the first has arrived (none after a minute of waiting). */
export async function mailTo(address: string): Promise<MailMessage[]> {
  for (let attempt = 0; attempt < deliveryPolls; attempt++) {
    const answer = await fetch(`${inject('mailApiUrl')}/messages?to=${encodeURIComponent(address)}`)
    const messages = (await answer.json()) as MailMessage[]
    if (messages.length > 0) return messages
    await new Promise((resolve) => setTimeout(resolve, 100))
  }
  return []
}

/** The messages to `address` whose subject is `subject`, read after `settleMs` so late ones are counted too. */
export async function mailWithSubject(address: string, subject: string, settleMs = 1500): Promise<MailMessage[]> {
  const read = async () => {
    const answer = await fetch(`${inject('mailApiUrl')}/messages?to=${encodeURIComponent(address)}`)
    return ((await answer.json()) as MailMessage[]).filter((message) => message.subject === subject)
  }
  for (let attempt = 0; attempt < deliveryPolls && (await read()).length === 0; attempt++) {
    await new Promise((resolve) => setTimeout(resolve, 100))
  }
  await new Promise((resolve) => setTimeout(resolve, settleMs))
  return read()
}

/**
 * The outbox rows to `address` (of `kind`, when given). Mail is written there in the transaction of the change it
 * tells of, so no row means no mail, now or later: a test of "no mail" reads this instead of waiting on the sink.
 */
export async function outboxRowsTo(address: string, kind?: string) {
  return database()<{ kind: string; subject: string; sent: boolean }[]>`select kind, subject, sent_at is not null as sent from outbox
    where recipient = ${address} and (${kind ?? null}::text is null or kind = ${kind ?? null}) order by id`
}

/** Invites a person as the demo admin, accepts the invitation, and returns their id and password. */
export async function newPerson(
  admin: Client,
  roles: string[] = ['engineer'],
  extra: { name?: string; organisationId?: number } = {},
): Promise<{ id: number; email: string; password: string; name: string }> {
  const handle = unique('p')
  const email = `${handle}@example.com`
  const name = extra.name ?? `Test Person ${handle}`
  const invited = await admin.post('/api/people/invite', { name, email, roles, organisationId: extra.organisationId })
  if (invited.status !== 201) throw new Error(`invite answered ${invited.status}: ${JSON.stringify(invited.body)}`)
  const [message] = await mailTo(email)
  const token = message!.text.match(/\/invitation\/([A-Za-z0-9_-]+)/)![1]!
  const password = `pw-${handle}-long`
  const accepted = await new Client().post(`/api/invitations/${token}`, { password, confirm: password })
  if (accepted.status !== 204) throw new Error(`accepting answered ${accepted.status}`)
  return { id: invited.body.id, email, password, name }
}

/** A background job as GET /api/jobs/[id] shows it once it has finished (done or failed). */
export async function finishedJob(client: Client, jobId: number, timeoutMs = 90_000): Promise<Answer> {
  const deadline = Date.now() + timeoutMs
  for (;;) {
    const answer = await client.get(`/api/jobs/${jobId}`)
    if (answer.status !== 200 || answer.body.status === 'done' || answer.body.status === 'failed') return answer
    if (Date.now() > deadline) throw new Error(`job ${jobId} had not finished after ${timeoutMs} ms: ${JSON.stringify(answer.body)}`)
    await new Promise((resolve) => setTimeout(resolve, 100))
  }
}

/**
 * POST /api/packages/[id]/issue and, when it is queued (202), the job it started waited for: the answer of the
 * request (a refusal as it came) and, once queued, the finished job (its `result` the package issue).
 */
export async function issuePackageAndWait(client: Client, packageId: number, body: unknown): Promise<{ request: Answer; job: Answer | null }> {
  const request = await client.post(`/api/packages/${packageId}/issue`, body)
  if (request.status !== 202) return { request, job: null }
  return { request, job: await finishedJob(client, request.body.jobId) }
}

/**
 * POST /api/sheets/[id]/issue and, when it is queued (202), the job it started waited for: the answer of the
 * request (a refusal as it came), the finished job, and `issued`, the job's result once done (the sheet as the
 * issue left it: `{ sheetId, revisionId, status, version, label }`), else null.
 */
export async function issueSheetAndWait(client: Client, sheetId: number, body: unknown): Promise<{ request: Answer; job: Answer | null; issued: any }> {
  const request = await client.post(`/api/sheets/${sheetId}/issue`, body)
  if (request.status !== 202) return { request, job: null, issued: null }
  const job = await finishedJob(client, request.body.jobId)
  return { request, job, issued: job.body.status === 'done' ? job.body.result : null }
}

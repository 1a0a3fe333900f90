// The local fake of the mail service: accepts every message over SMTP on loopback, stores it as JSON in
// .data/mail/<smtp-port>/, and serves the messages back over HTTP so tests and people can read them:
//   GET /messages[?to=address]   the stored messages, oldest first (each with its Message-ID header)
//   DELETE /messages             removes them all
// Run by scripts/mail-sink; not part of the app.
import { mkdir, readdir, readFile, rm, writeFile } from 'node:fs/promises'
import { createServer } from 'node:http'
import { randomUUID } from 'node:crypto'
import { join } from 'node:path'
import { parseArgs } from 'node:util'
import { SMTPServer } from 'smtp-server'
import { simpleParser, type AddressObject } from 'mailparser'

const { values } = parseArgs({
  options: {
    'smtp-port': { type: 'string', default: '2525' },
    'http-port': { type: 'string', default: '2580' },
    dir: { type: 'string' },
  },
})
const smtpPort = Number(values['smtp-port'])
const httpPort = Number(values['http-port'])
const folder = values.dir ?? join(process.cwd(), '.data', 'mail', String(smtpPort))
await mkdir(folder, { recursive: true })

interface StoredMessage {
  id: string
  /** The Message-ID header the sender gave (the outbox's `message_id`): tests count a message's copies by it. */
  messageId: string | null
  receivedAt: string
  envelope: { from: string | null; to: string[] }
  from: string | null
  to: string[]
  subject: string
  text: string
  html: string | null
}

function addresses(field: AddressObject | AddressObject[] | undefined): string[] {
  const list = Array.isArray(field) ? field : field ? [field] : []
  return list.flatMap((group) => group.value.map((entry) => (entry.address ?? '').toLowerCase())).filter(Boolean)
}

const smtp = new SMTPServer({
  name: 'loopwright-mail-sink',
  authOptional: true,
  disabledCommands: ['STARTTLS', 'AUTH'],
  logger: false,
  onData(stream, session, callback) {
    simpleParser(stream)
      .then(async (parsed) => {
        const receivedAt = new Date()
        const message: StoredMessage = {
          id: `${receivedAt.getTime()}-${randomUUID().slice(0, 8)}`,
          messageId: parsed.messageId ?? null,
          receivedAt: receivedAt.toISOString(),
          envelope: {
            from: session.envelope.mailFrom ? session.envelope.mailFrom.address : null,
            to: session.envelope.rcptTo.map((rcpt) => rcpt.address.toLowerCase()),
          },
          from: parsed.from?.value[0]?.address ?? null,
          to: addresses(parsed.to),
          subject: parsed.subject ?? '',
          text: parsed.text ?? '',
          html: typeof parsed.html === 'string' ? parsed.html : null,
        }
        await writeFile(join(folder, `${message.id}.json`), JSON.stringify(message, null, 2))
        callback()
      })
      .catch((error: Error) => callback(error))
  },
})

async function storedMessages(): Promise<StoredMessage[]> {
  const names = (await readdir(folder)).filter((name) => name.endsWith('.json')).sort()
  const messages = await Promise.all(names.map(async (name) => JSON.parse(await readFile(join(folder, name), 'utf8'))))
  return messages as StoredMessage[]
}

const http = createServer((request, response) => {
  const url = new URL(request.url ?? '/', `http://127.0.0.1:${httpPort}`)
  const answer = (status: number, body?: unknown) => {
    response.writeHead(status, body === undefined ? {} : { 'content-type': 'application/json' })
    response.end(body === undefined ? undefined : JSON.stringify(body))
  }
  const work = async () => {
    if (url.pathname === '/health') return answer(200, { ok: true, smtpPort })
    if (url.pathname !== '/messages') return answer(404, { error: 'not found' })
    if (request.method === 'GET') {
      const to = url.searchParams.get('to')?.toLowerCase()
      const messages = await storedMessages()
      return answer(200, to ? messages.filter((m) => m.envelope.to.includes(to) || m.to.includes(to)) : messages)
    }
    if (request.method === 'DELETE') {
      const names = (await readdir(folder)).filter((name) => name.endsWith('.json'))
      await Promise.all(names.map((name) => rm(join(folder, name), { force: true })))
      return answer(204)
    }
    return answer(405, { error: 'method not allowed' })
  }
  work().catch((error: Error) => answer(500, { error: error.message }))
})

smtp.listen(smtpPort, '127.0.0.1')
http.listen(httpPort, '127.0.0.1')
smtp.on('error', (error) => {
  console.error(error)
  process.exit(1)
})
http.on('error', (error) => {
  console.error(error)
  process.exit(1)
})
console.log(`mail sink: SMTP 127.0.0.1:${smtpPort}, messages at http://127.0.0.1:${httpPort}/messages, stored in ${folder}`)

for (const signal of ['SIGTERM', 'SIGINT'] as const) {
  process.on(signal, () => {
    smtp.close(() => http.close(() => process.exit(0)))
    setTimeout(() => process.exit(0), 2000).unref()
  })
}

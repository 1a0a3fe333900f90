// Issue 6, finding 6 and part of 7: security headers on pages and API answers, state-changing requests
// from other sites refused, JSON routes taking only JSON, and a body past its limit never read whole.
import { request as httpRequest } from 'node:http'
import { describe, expect, it, inject } from 'vitest'
import { database, demo, sendUnread, signedIn, unique } from './support/client'

const base = () => inject('baseUrl')

async function raw(method: string, path: string, headers: Record<string, string>, body?: string) {
  const answer = await fetch(`${base()}${path}`, { method, headers, body, redirect: 'manual' })
  const text = await answer.text()
  let json: any = null
  try {
    json = text ? JSON.parse(text) : null
  } catch {
    // not JSON
  }
  return { status: answer.status, headers: answer.headers, json }
}

describe('security headers', () => {
  it('sends a CSP with a nonce, frame and referrer policies, and no x-powered-by, on a page', async () => {
    const answer = await fetch(`${base()}/sign-in`)
    const html = await answer.text()
    expect(answer.status).toBe(200)
    const csp = answer.headers.get('content-security-policy') ?? ''
    const nonce = /'nonce-([^']+)'/.exec(csp)?.[1]
    expect(nonce).toBeTruthy()
    expect(csp).toMatch(/script-src 'self' 'strict-dynamic' 'nonce-[^']+'/)
    expect(csp).toContain("frame-ancestors 'none'")
    expect(csp).toContain("object-src 'none'")
    expect(csp).not.toContain('unsafe-eval')
    // Every script of the page carries the response's nonce.
    const scripts = html.match(/<script\b[^>]*>/g) ?? []
    expect(scripts.length).toBeGreaterThan(0)
    for (const tag of scripts) expect(tag).toContain(`nonce="${nonce}"`)
    expect(answer.headers.get('x-frame-options')).toBe('DENY')
    expect(answer.headers.get('referrer-policy')).toBe('no-referrer')
    expect(answer.headers.get('x-content-type-options')).toBe('nosniff')
    expect(answer.headers.get('x-powered-by')).toBeNull()
  })

  it('sends the frame and referrer policies, and no x-powered-by, on an API answer', async () => {
    const answer = await fetch(`${base()}/api/_auth/session`)
    expect(answer.status).toBe(200)
    expect(answer.headers.get('x-frame-options')).toBe('DENY')
    expect(answer.headers.get('referrer-policy')).toBe('no-referrer')
    expect(answer.headers.get('x-content-type-options')).toBe('nosniff')
    expect(answer.headers.get('x-powered-by')).toBeNull()
  })
})

describe('requests from other sites', () => {
  it('refuses a cross-site form post creating an organisation with 403, creates nothing, and records it', async () => {
    const admin = await signedIn(demo.admin)
    const name = unique('Evil Org ')
    const answer = await raw('POST', '/api/organisations', {
      cookie: admin.cookie,
      origin: 'http://evil.example',
      'content-type': 'application/x-www-form-urlencoded',
    }, `name=${encodeURIComponent(name)}`)
    expect(answer.status).toBe(403)
    expect(await database()`select id from organisations where name = ${name}`).toHaveLength(0)
    const [event] = await database()`select status, method, detail from audit_events
      where action = 'access.refused' and path = '/api/organisations' order by id desc limit 1`
    expect(event).toMatchObject({ status: 403, method: 'POST', detail: { origin: 'http://evil.example' } })
  })

  it('refuses a cross-site JSON request too, and a sign-in from another site', async () => {
    const admin = await signedIn(demo.admin)
    const name = unique('Evil Org ')
    const json = { cookie: admin.cookie, origin: 'http://evil.example', 'content-type': 'application/json' }
    expect((await raw('POST', '/api/organisations', json, JSON.stringify({ name }))).status).toBe(403)
    expect((await raw('POST', '/api/auth/login', { origin: 'null', 'content-type': 'application/json' }, JSON.stringify({ email: demo.admin, password: 'x' }))).status).toBe(403)
    expect(await database()`select id from organisations where name = ${name}`).toHaveLength(0)
  })

  it('accepts the same request from this site itself', async () => {
    const admin = await signedIn(demo.admin)
    const name = unique('Own Org ')
    const answer = await raw('POST', '/api/organisations', { cookie: admin.cookie, origin: base(), 'content-type': 'application/json' }, JSON.stringify({ name }))
    expect(answer.status).toBe(201)
    expect(answer.json.name).toBe(name)
  })
})

describe('JSON routes take only JSON', () => {
  it.each([
    ['text/plain', (name: string) => JSON.stringify({ name })],
    ['application/x-www-form-urlencoded', (name: string) => `name=${encodeURIComponent(name)}`],
    ['multipart/form-data; boundary=x', (name: string) => `--x\r\nContent-Disposition: form-data; name="name"\r\n\r\n${name}\r\n--x--\r\n`],
  ])('answers %s 415 on POST /api/organisations, creating nothing', async (type, body) => {
    const admin = await signedIn(demo.admin)
    const name = unique('Typed Org ')
    const answer = await raw('POST', '/api/organisations', { cookie: admin.cookie, 'content-type': type }, body(name))
    expect(answer.status).toBe(415)
    expect(answer.json.message).toMatch(/application\/json/)
    expect(await database()`select id from organisations where name = ${name}`).toHaveLength(0)
  })

  it('answers a text/plain sign-in 415', async () => {
    const answer = await raw('POST', '/api/auth/login', { 'content-type': 'text/plain' }, JSON.stringify({ email: demo.admin, password: 'hollins-demo-2140' }))
    expect(answer.status).toBe(415)
    expect(answer.headers.get('set-cookie')).toBeNull()
  })

  it('accepts application/json with a charset', async () => {
    const admin = await signedIn(demo.admin)
    const name = unique('Charset Org ')
    const answer = await raw('POST', '/api/organisations', { cookie: admin.cookie, 'content-type': 'application/json; charset=utf-8' }, JSON.stringify({ name }))
    expect(answer.status).toBe(201)
  })
})

describe('a body past its limit', () => {
  it('refuses a chunked 10 MB body to /api/calculate with 413 naming file, long before it is all sent', { timeout: 120_000 }, async () => {
    const engineer = await signedIn(demo.engineer)
    const total = 10 * 1024 * 1024
    const chunk = Buffer.alloc(64 * 1024, 0x20)
    const url = new URL('/api/calculate', base())
    const outcome = await new Promise<{ status: number; body: string; sentAtAnswer: number }>((resolve, reject) => {
      let sent = 0
      let answered = false
      const req = httpRequest(
        { method: 'POST', hostname: url.hostname, port: url.port, path: url.pathname, headers: { cookie: engineer.cookie, 'content-type': 'application/json', 'transfer-encoding': 'chunked' } },
        (res) => {
          answered = true
          const sentAtAnswer = sent
          let body = ''
          res.on('data', (d) => (body += d))
          res.on('end', () => resolve({ status: res.statusCode ?? 0, body, sentAtAnswer }))
        },
      )
      // Writes after the server closed the connection fail; that is the point.
      req.on('error', (error) => (answered ? undefined : reject(error)))
      req.write('{"title": "')
      const pump = () => {
        if (answered || req.destroyed) return
        if (sent >= total) return void req.end('"}')
        sent += chunk.length
        // A little at a time, so the answer can overtake the body (no Content-Length: chunked).
        if (req.write(chunk)) setTimeout(pump, 2)
        else req.once('drain', () => setTimeout(pump, 2))
      }
      pump()
    })
    expect(outcome.status).toBe(413)
    expect(JSON.parse(outcome.body).data.field).toBe('file')
    expect(outcome.sentAtAnswer).toBeLessThan(total / 2)
  })

  it('refuses a declared body past the general limit with 413 before reading it', async () => {
    const admin = await signedIn(demo.admin)
    const answer = await sendUnread('/api/organisations', { cookie: admin.cookie, 'content-type': 'application/json' }, JSON.stringify({ name: 'x'.repeat(2 * 1024 * 1024) }))
    expect(answer.status).toBe(413)
  })

  it('still reads a chunked body within the limit', async () => {
    const engineer = await signedIn(demo.engineer)
    const body = JSON.stringify({ parameters: {}, blocks: { G: { role: 'plant', num: '1', den: 's + 1' } }, structure: { feedback: { forward: 'G' } } })
    const stream = new ReadableStream({
      start(controller) {
        controller.enqueue(new TextEncoder().encode(body))
        controller.close()
      },
    })
    const answer = await fetch(`${base()}/api/calculate`, {
      method: 'POST',
      headers: { cookie: engineer.cookie, 'content-type': 'application/json' },
      body: stream,
      // @ts-expect-error Node's fetch needs this for a streamed body
      duplex: 'half',
    })
    expect(answer.status).toBe(200)
    expect((await answer.json()).closed_loop.den).toEqual([1, 2])
  })
})

// The one table of every API route: who may call it and a valid sample request. Three tests read it:
// routes-covered.test.ts (every file of server/api/ has a row), authorisation-matrix.test.ts (every route ×
// every caller → the status of the row) and bad-input.test.ts (every route × every caller it admits × each bad
// shape → a 4xx, never a 500). A new route gets its row here the day it is written (DEVELOPERS.md, "Route table").
import type { Role } from '../../../shared/schemas/roles'
import { Client, database, demo, mailTo, mailWithSubject, newPerson, signedIn, unique } from './client'

/** Who calls: signed out, or signed in as the demo person of one role. */
export const callers = ['signedOut', 'admin', 'engineer', 'checker', 'client'] as const
export type Caller = (typeof callers)[number]

/** The status each caller gets from a valid request: the success status, or 401 / 403. */
export type Expected = Record<Caller, number>

/** Signed-out callers get 401; the roles named get `success`, every other role 403. */
export function onlyRoles(success: number, ...roles: Role[]): Expected {
  return {
    signedOut: 401,
    admin: roles.includes('admin') ? success : 403,
    engineer: roles.includes('engineer') ? success : 403,
    checker: roles.includes('checker') ? success : 403,
    client: roles.includes('client') ? success : 403,
  }
}

/** Any signed-in person gets `success`; signed out, 401. */
export function signedInOnly(success: number): Expected {
  return { signedOut: 401, admin: success, engineer: success, checker: success, client: success }
}

/** Open to everyone, signed in or not. */
export function everyone(success: number): Expected {
  return { signedOut: success, admin: success, engineer: success, checker: success, client: success }
}

/** One request made ready: the route's parameters filled with sample values, and a valid body. */
export interface Prepared {
  /** Values of the route's `[name]` parameters. */
  params?: Record<string, string>
  /** A valid JSON body; none for a route that reads no body. */
  body?: unknown
}

/** The names of the bad-input shapes of bad-input.test.ts that a body value may be replaced by. */
export type ValueShape = 'nul' | 'surrogate' | 'long' | '1e10' | '1e20' | '-1' | 'NaN' | 'array' | 'object' | 'null'

export interface RouteRow {
  method: 'GET' | 'POST' | 'PATCH' | 'DELETE'
  /** The route as Nitro makes it from the file name: `/api/projects/[id]/members/[personId]`. */
  route: string
  /** The status of a valid request, per caller. */
  expect: Expected
  /**
   * A valid request for one call. Rows whose call uses its sample up (creates a row of a unique name, spends an
   * invitation, removes a member) make a new one each time.
   */
  prepare: (kit: Kit) => Promise<Prepared>
  /** A list route (listQuerySchema): the sweep also sends bad `page`, `pageSize`, `q`, `sort` and `dir`. */
  list?: boolean
  /** The call ends or replaces the caller's session: it is made by a session signed in for it alone. */
  ownSession?: boolean
  /** Dotted paths of the body where some bad shapes are valid values after all (a gain of −1 is a gain). */
  accepts?: Record<string, ValueShape[]>
  /** Whole bodies, beyond the value-by-value shapes, that must be refused with a 4xx. */
  badBodies?: (valid: unknown) => unknown[]
  /** Not a file of server/api/ but a module's own route (nuxt-auth-utils). */
  module?: string
}

/** Sample rows for the prepare functions: made through the API as the demo admin, once or per call. */
export class Kit {
  private cache = new Map<string, Promise<unknown>>()
  constructor(readonly admin: Client) {}

  static async start(): Promise<Kit> {
    return new Kit(await signedIn(demo.admin))
  }

  private once<T>(key: string, make: () => Promise<T>): Promise<T> {
    if (!this.cache.has(key)) this.cache.set(key, make())
    return this.cache.get(key) as Promise<T>
  }

  personId(email: string): Promise<number> {
    return this.once(`person:${email}`, async () => {
      const [row] = await database()`select id from people where email = ${email}`
      return row!.id as number
    })
  }

  /** The demo project NWD-214, of which the demo engineer, checker and client are members. */
  demoProjectId(): Promise<number> {
    return this.once('project:NWD-214', async () => {
      const [row] = await database()`select id from projects where number = 'NWD-214'`
      return row!.id as number
    })
  }

  demoOrganisationId(): Promise<number> {
    return this.once('organisation:Northmere', async () => {
      const [row] = await database()`select id from organisations where name = 'Northmere Water District'`
      return row!.id as number
    })
  }

  /** A new project of the demo client, without members. */
  async newProject(): Promise<number> {
    const answer = await this.admin.post('/api/projects', {
      number: unique('RT-').toUpperCase(),
      name: 'Route table sample',
      organisationId: await this.demoOrganisationId(),
    })
    if (answer.status !== 201) throw new Error(`creating a sample project answered ${answer.status}`)
    return answer.body.id
  }

  /** A new invited person (no password yet) of the roles given: sample rows never touch the demo people. */
  async newInvitedPerson(roles: Role[] = ['engineer']): Promise<number> {
    const handle = unique('rt')
    const answer = await this.admin.post('/api/people/invite', { name: `Sample ${handle}`, email: `${handle}@example.com`, roles })
    if (answer.status !== 201) throw new Error(`inviting a sample person answered ${answer.status}`)
    return answer.body.id
  }

  /** The token of a new invitation, from the e-mail it sends. */
  async newInvitationToken(): Promise<string> {
    const handle = unique('rt')
    const email = `${handle}@example.com`
    const answer = await this.admin.post('/api/people/invite', { name: `Sample ${handle}`, email, roles: ['checker'] })
    if (answer.status !== 201) throw new Error(`inviting a sample person answered ${answer.status}`)
    const [message] = await mailTo(email)
    return message!.text.match(/\/invitation\/([A-Za-z0-9_-]+)/)![1]!
  }

  invitationToken(): Promise<string> {
    return this.once('invitation', () => this.newInvitationToken())
  }

  /** A person who can sign in, kept for the sign-in row (so the demo accounts never meet a failure count). */
  signInPerson(): Promise<{ email: string; password: string }> {
    return this.once('sign-in person', () => newPerson(this.admin, ['engineer']))
  }

  /** The demo engineer's session, for samples only an engineer member can make. */
  engineer(): Promise<Client> {
    return this.once('engineer session', () => signedIn(demo.engineer))
  }
  /** A draft sheet of NWD-214 (blank document), made once by the demo engineer. */
  sampleSheet(): Promise<{ id: number; document: unknown }> {
    return this.once('sheet', async () => {
      const engineer = await this.engineer()
      const created = await engineer.post(`/api/projects/${await this.demoProjectId()}/sheets`, { title: 'Route table sample sheet', loopTag: 'TIC-214-99' })
      if (created.status !== 201) throw new Error(`creating a sample sheet answered ${created.status}`)
      const detail = await engineer.get(`/api/sheets/${created.body.id}`)
      return { id: created.body.id as number, document: detail.body.revision.document }
    })
  }
  /** The sample sheet's version now (a valid save bumps it). */
  async sampleSheetVersion(): Promise<number> {
    const [row] = await database()`select version from sheet_revisions where sheet_id = ${(await this.sampleSheet()).id}`
    return row!.version as number
  }
  /** The token of a new reset link of a new person, from the e-mail (asked from an address of its own: the throttle). */
  async newResetToken(): Promise<string> {
    const person = await newPerson(this.admin, ['engineer'])
    // A local address of its own each time: the reset throttle counts requests per client address.
    const from = `127.0.${1 + Math.floor(Math.random() * 250)}.${1 + Math.floor(Math.random() * 250)}`
    const asked = await new Client(from).post('/api/auth/reset-request', { email: person.email })
    if (asked.status !== 202) throw new Error(`a reset request answered ${asked.status}`)
    const message = (await mailTo(person.email)).find((mail) => mail.subject === 'Reset your Loopwright password')
    if (!message) {
      const later = await mailWithSubject(person.email, 'Reset your Loopwright password', 0)
      return later[0]!.text.match(/\/reset-password\/([A-Za-z0-9_-]+)/)![1]!
    }
    return message.text.match(/\/reset-password\/([A-Za-z0-9_-]+)/)![1]!
  }
  resetToken(): Promise<string> {
    return this.once('reset', () => this.newResetToken())
  }
  /** A waiting job of a kind no runner handles, owned by the demo engineer. */
  engineerJob(): Promise<number> {
    return this.once('job', async () => {
      const owner = await this.personId(demo.engineer)
      const [row] = await database()`insert into jobs (kind, payload, created_by) values ('route-table.sample', '{}'::jsonb, ${owner}) returning id`
      return Number(row!.id)
    })
  }
  firmSettings(): Promise<unknown> {
    return this.once('firm', async () => (await this.admin.get('/api/firm')).body)
  }
}

/** A small loop file: a first-order plant under proportional control. */
export const sampleLoop = {
  parameters: { K: { value: 2, unit: '1', note: 'route table sample' } },
  blocks: { G: { role: 'plant', label: 'sample plant', num: 'K', den: 's + 1' } },
  structure: { feedback: { forward: 'G', return: null, sign: -1 } },
}

export const routes: RouteRow[] = [
  {
    method: 'POST',
    route: '/api/auth/login',
    expect: everyone(200),
    ownSession: true,
    prepare: async (kit) => {
      const { email, password } = await kit.signInPerson()
      return { body: { email, password } }
    },
  },
  { method: 'POST', route: '/api/auth/logout', expect: signedInOnly(204), ownSession: true, prepare: async () => ({}) },
  { method: 'GET', route: '/api/_auth/session', module: 'nuxt-auth-utils', expect: everyone(200), prepare: async () => ({}) },
  {
    method: 'DELETE',
    route: '/api/_auth/session',
    module: 'nuxt-auth-utils',
    expect: everyone(200),
    ownSession: true,
    prepare: async () => ({}),
  },
  {
    method: 'GET',
    route: '/api/invitations/[token]',
    expect: everyone(200),
    prepare: async (kit) => ({ params: { token: await kit.invitationToken() } }),
  },
  {
    method: 'POST',
    route: '/api/invitations/[token]',
    expect: everyone(204),
    prepare: async (kit) => ({
      params: { token: await kit.newInvitationToken() },
      body: { password: 'route-table-sample-1', confirm: 'route-table-sample-1' },
    }),
  },
  {
    method: 'POST',
    route: '/api/auth/reset-request',
    // The same answer for every caller and every address (no account enumeration).
    expect: everyone(202),
    prepare: async () => ({ body: { email: `${unique('nobody')}@example.com` } }),
  },
  {
    method: 'GET',
    route: '/api/auth/reset/[token]',
    expect: everyone(200),
    prepare: async (kit) => ({ params: { token: await kit.resetToken() } }),
  },
  {
    method: 'POST',
    route: '/api/auth/reset/[token]',
    expect: everyone(204),
    prepare: async (kit) => ({ params: { token: await kit.newResetToken() }, body: { password: 'route-table-reset-1', confirm: 'route-table-reset-1' } }),
  },
  { method: 'GET', route: '/api/people', expect: onlyRoles(200, 'admin'), list: true, prepare: async () => ({}) },
  {
    method: 'POST',
    route: '/api/people/invite',
    expect: onlyRoles(201, 'admin'),
    prepare: async (kit) => {
      const handle = unique('rt')
      return {
        body: { name: `Sample ${handle}`, email: `${handle}@example.com`, roles: ['client'], organisationId: await kit.demoOrganisationId() },
      }
    },
  },
  {
    method: 'PATCH',
    route: '/api/people/[id]',
    expect: onlyRoles(200, 'admin'),
    prepare: async (kit) => ({
      params: { id: String(await kit.newInvitedPerson()) },
      body: { name: unique('Renamed '), roles: ['engineer', 'checker'], active: true },
    }),
  },
  {
    method: 'POST',
    route: '/api/people/[id]/sessions/revoke',
    expect: onlyRoles(200, 'admin'),
    prepare: async (kit) => ({ params: { id: String(await kit.newInvitedPerson()) } }),
  },
  { method: 'GET', route: '/api/organisations', expect: onlyRoles(200, 'admin'), list: true, prepare: async () => ({}) },
  {
    method: 'POST',
    route: '/api/organisations',
    expect: onlyRoles(201, 'admin'),
    prepare: async () => ({ body: { name: unique('Sample Utility ') } }),
  },
  { method: 'GET', route: '/api/projects', expect: signedInOnly(200), list: true, prepare: async () => ({}) },
  {
    method: 'POST',
    route: '/api/projects',
    expect: onlyRoles(201, 'admin'),
    prepare: async (kit) => ({
      body: { number: unique('RT-').toUpperCase(), name: 'Route table sample', organisationId: await kit.demoOrganisationId() },
    }),
  },
  {
    method: 'GET',
    route: '/api/projects/[id]',
    // Every demo caller is a member of NWD-214 (scripts/demo-people.ts); issue 8 adds "another's project".
    expect: signedInOnly(200),
    prepare: async (kit) => ({ params: { id: String(await kit.demoProjectId()) } }),
  },
  {
    method: 'POST',
    route: '/api/projects/[id]/members',
    expect: onlyRoles(201, 'admin'),
    prepare: async (kit) => ({
      params: { id: String(await kit.newProject()) },
      body: { personId: await kit.newInvitedPerson(['engineer']), role: 'engineer' },
    }),
  },
  {
    method: 'DELETE',
    route: '/api/projects/[id]/members/[personId]',
    expect: onlyRoles(200, 'admin'),
    prepare: async (kit) => {
      const id = await kit.newProject()
      const personId = await kit.newInvitedPerson(['checker'])
      const added = await kit.admin.post(`/api/projects/${id}/members`, { personId, role: 'checker' })
      if (added.status !== 201) throw new Error(`adding a sample member answered ${added.status}`)
      return { params: { id: String(id), personId: String(personId) } }
    },
  },
  { method: 'GET', route: '/api/audit', expect: onlyRoles(200, 'admin'), list: true, prepare: async () => ({}) },
  {
    method: 'POST',
    route: '/api/audit/page-refusals',
    expect: signedInOnly(204),
    prepare: async () => ({ body: { page: '/audit' } }),
  },
  { method: 'GET', route: '/api/firm', expect: signedInOnly(200), prepare: async () => ({}) },
  {
    method: 'PATCH',
    route: '/api/firm',
    expect: onlyRoles(200, 'admin'),
    prepare: async (kit) => ({ body: await kit.firmSettings() }),
  },
  {
    method: 'POST',
    route: '/api/calculate',
    // Closed to clients, who have no use for the calculator (product.md; issue 6, finding 4).
    expect: onlyRoles(200, 'engineer', 'checker', 'admin'),
    prepare: async () => ({ body: structuredClone(sampleLoop) }),
    // Any finite gain is a loop the engine computes: these numbers are values, not bad input, there.
    accepts: { 'parameters.K.value': ['1e10', '1e20', '-1'] },
    badBodies: (valid) => {
      const loop = valid as typeof sampleLoop
      return [
        { ...loop, parameters: { 'K\u0000': { value: 2 } } },
        { ...loop, blocks: { ...loop.blocks, ['H\ud800']: { role: 'sensor', num: '1' } } },
        { ...loop, title: 'x'.repeat(300_000) },
      ]
    },
  },
  // Sheets and packages: every demo caller is a member of NWD-214. Other projects, drafts against issued
  // revisions, and every role against them are in tests/server/sheets-access.test.ts.
  {
    method: 'GET',
    route: '/api/projects/[id]/sheets',
    expect: signedInOnly(200),
    list: true,
    prepare: async (kit) => ({ params: { id: String(await kit.demoProjectId()) } }),
  },
  {
    method: 'POST',
    route: '/api/projects/[id]/sheets',
    expect: onlyRoles(201, 'engineer'),
    prepare: async (kit) => ({ params: { id: String(await kit.demoProjectId()) }, body: { title: unique('Route table sheet '), loopTag: 'TIC-214-98' } }),
  },
  { method: 'GET', route: '/api/sheets', expect: signedInOnly(200), list: true, prepare: async () => ({}) },
  {
    method: 'GET',
    route: '/api/sheets/[id]',
    // A draft: a client never sees one (product.md).
    expect: { signedOut: 401, admin: 200, engineer: 200, checker: 200, client: 403 },
    prepare: async (kit) => ({ params: { id: String((await kit.sampleSheet()).id) } }),
  },
  {
    method: 'PATCH',
    route: '/api/sheets/[id]',
    expect: { signedOut: 401, admin: 403, engineer: 200, checker: 403, client: 403 },
    prepare: async (kit) => {
      const sheet = await kit.sampleSheet()
      return { params: { id: String(sheet.id) }, body: { version: await kit.sampleSheetVersion(), document: sheet.document } }
    },
    // Any finite gain or time constant is a loop the engine computes, and a null return path is unity feedback.
    accepts: {
      'document.loop.parameters.K.value': ['1e10', '1e20', '-1'],
      'document.loop.parameters.T.value': ['1e10', '1e20', '-1'],
      'document.loop.structure.feedback.sign': ['-1'],
      'document.loop.structure.feedback.return': ['null'],
    },
  },
  {
    method: 'GET',
    route: '/api/projects/[id]/packages',
    expect: signedInOnly(200),
    prepare: async (kit) => ({ params: { id: String(await kit.demoProjectId()) } }),
  },
  {
    method: 'POST',
    route: '/api/projects/[id]/packages',
    expect: onlyRoles(201, 'engineer'),
    prepare: async (kit) => ({ params: { id: String(await kit.demoProjectId()) }, body: { title: unique('Route table package ') } }),
  },
  {
    method: 'GET',
    route: '/api/jobs/[id]',
    // A job is its owner's alone (its progress bar): the demo engineer's job, refused to everyone else.
    expect: { signedOut: 401, admin: 403, engineer: 200, checker: 403, client: 403 },
    prepare: async (kit) => ({ params: { id: String(await kit.engineerJob()) } }),
  },
  { method: 'GET', route: '/api/templates', expect: onlyRoles(200, 'engineer', 'checker', 'admin'), prepare: async () => ({}) },
  {
    method: 'GET',
    route: '/api/templates/[name]',
    expect: onlyRoles(200, 'engineer', 'checker', 'admin'),
    prepare: async () => ({ params: { name: 'pi-pressure-loop' } }),
  },
]

/** The path of `row` with `params` put in (as given: a bad-input shape such as `%00` goes as it is). */
export function pathOf(row: RouteRow, params: Record<string, string> = {}): string {
  return row.route.replace(/\[(\w+)\]/g, (_, name: string) => {
    const value = params[name]
    if (value === undefined) throw new Error(`${row.method} ${row.route}: no sample value for [${name}]`)
    return value
  })
}

/** The demo person of each role, signed in; signed out is a client without a cookie. */
export async function callerClients(): Promise<Record<Caller, Client>> {
  return {
    signedOut: new Client(),
    admin: await signedIn(demo.admin),
    engineer: await signedIn(demo.engineer),
    checker: await signedIn(demo.checker),
    client: await signedIn(demo.client),
  }
}

/** A session of its own for a call that ends or replaces it. */
export async function freshClient(caller: Caller): Promise<Client> {
  return caller === 'signedOut' ? new Client() : signedIn(demo[caller])
}

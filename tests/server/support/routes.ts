// The one table of every API route: who may call it and a valid sample request. Three tests read it:
// routes-covered.test.ts (every file of server/api/ has a row), authorisation-matrix.test.ts (every route ×
// every caller → the status of the row) and bad-input.test.ts (every route × every caller it admits × each bad
// shape → a 4xx, never a 500). A new route gets its row here the day it is written (DEVELOPERS.md, "Route table").
import { createHash } from 'node:crypto'
import type { Role } from '../../../shared/schemas/roles'
import { demoPassword } from '../../../scripts/demo-people'
import { uploadStepTest } from './step-tests'
import { Client, database, demo, formWith, issuePackageAndWait, issueSheetAndWait, mailTo, mailWithSubject, newPerson, signedIn, unique } from './client'

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
  /** A valid query (`?from=0&to=0`); the bad-input sweep replaces each value by bad shapes. */
  query?: Record<string, string>
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
  /** Multipart forms (an upload route's) that must be refused with a 4xx. */
  badForms?: () => FormData[]
  /** Not a file of server/api/ but a module's own route (nuxt-auth-utils). */
  module?: string
  /**
   * `'project'`: the route acts on a record of one project (its path names a project, sheet, package, revision or
   * comment). The matrix then calls it a second time with `prepare(kit.elsewhere())`: a record of another
   * organisation's project, of which none of the demo callers is a member. Required of every such route
   * (authorisation-matrix.test.ts, `projectScoped`).
   */
  scope?: 'project'
  /**
   * The status each caller gets for the record of the other project, where it differs from `nonMember(expect)`
   * (admins as at home, every other signed-in caller 403).
   */
  expectElsewhere?: Partial<Expected>
  /** A prepare of its own for the other project, where `prepare(kit.elsewhere())` cannot serve. */
  prepareElsewhere?: (kit: Kit) => Promise<Prepared>
}

/** A small step-test-like CSV (invented numbers), the upload routes' sample. */
export const sampleCsv = () => new TextEncoder().encode('time_s,output_pct,flow_lps\n0,40,1.20\n1,45,1.21\n2,45,1.32\n')

/**
 * Routes that act on a record of one project: their rows need `scope: 'project'`, so the matrix calls them as a
 * member and as a non-member (issue 8, "own project and another's").
 */
export const projectScopedRoute = /^\/api\/(projects\/\[id\]|sheets\/\[id\]|packages\/\[id\]|package-issues\/\[id\]|revisions\/\[id\]|comments\/\[id\])/

/**
 * The status each caller gets for a record of a project they are not a member of: signed out as ever, an admin
 * (whose reach is the firm's, not a project's) as at home, every other role refused with 403.
 */
export function nonMember(home: Expected): Expected {
  const refusal = (status: number) => (status === 401 ? 401 : 403)
  return { signedOut: home.signedOut, admin: home.admin, engineer: refusal(home.engineer), checker: refusal(home.checker), client: refusal(home.client) }
}

/** What `row` answers each caller for the other project's record. */
export function expectedElsewhere(row: RouteRow): Expected {
  return { ...nonMember(row.expect), ...row.expectElsewhere }
}

/**
 * Where a row's samples live. `home`: NWD-214, of which the demo engineer, checker and client are members.
 * `elsewhere`: a project of another client organisation, whose members are people of its own, none of the demo
 * people (issue 8: "own project and another's"). A row with `scope: 'project'` is prepared in both.
 */
export type Place = 'home' | 'elsewhere'

/** The people and records of the `elsewhere` project, made once through the API as the demo admin. */
interface Elsewhere {
  organisationId: number
  organisationName: string
  projectId: number
  projectNumber: string
  projectName: string
  engineer: Client
  checker: Client
  client: Client
  /** The passwords of its engineer and checker, for the samples that sign. */
  passwords: Record<'engineer' | 'checker' | 'client', string>
}

/**
 * Sample rows for the prepare functions: made through the API as the demo admin, once or per call. A prepare
 * asks the kit for the project, its engineer and checker, and its sample sheet; the matrix hands the same
 * prepare the kit of the other place (`kit.elsewhere()`), so one prepare serves both.
 */
export class Kit {
  private cache = new Map<string, Promise<unknown>>()
  private elsewhereKit?: Kit
  constructor(
    readonly admin: Client,
    readonly place: Place = 'home',
    private readonly shared: Map<string, Promise<unknown>> = new Map(),
  ) {}

  static async start(): Promise<Kit> {
    return new Kit(await signedIn(demo.admin))
  }

  /** The same kit for the project of another organisation: every sample it makes is made there. */
  elsewhere(): Kit {
    if (this.place === 'elsewhere') return this
    this.elsewhereKit ??= new Kit(this.admin, 'elsewhere', this.shared)
    return this.elsewhereKit
  }

  private once<T>(key: string, make: () => Promise<T>): Promise<T> {
    if (!this.cache.has(key)) this.cache.set(key, make())
    return this.cache.get(key) as Promise<T>
  }

  /** Kept across both places (people, invitations: they belong to no project). */
  private onceForBoth<T>(key: string, make: () => Promise<T>): Promise<T> {
    if (!this.shared.has(key)) this.shared.set(key, make())
    return this.shared.get(key) as Promise<T>
  }

  /** The other organisation, its project and its own engineer, checker and client (members of it alone). */
  private other(): Promise<Elsewhere> {
    return this.onceForBoth('elsewhere', async () => {
      const organisationName = unique('Outside Utility ')
      const organisation = await this.admin.post('/api/organisations', { name: organisationName })
      if (organisation.status !== 201) throw new Error(`creating the other organisation answered ${organisation.status}`)
      const projectNumber = unique('ELSE-').toUpperCase()
      const projectName = `Outside works ${projectNumber.toLowerCase()}`
      const project = await this.admin.post('/api/projects', { number: projectNumber, name: projectName, organisationId: organisation.body.id })
      if (project.status !== 201) throw new Error(`creating the other project answered ${project.status}`)
      const members = {} as Record<'engineer' | 'checker' | 'client', Client>
      const passwords = {} as Record<'engineer' | 'checker' | 'client', string>
      for (const role of ['engineer', 'checker', 'client'] as const) {
        const person = await newPerson(this.admin, [role], { name: `Outside ${role} ${projectNumber}`, organisationId: role === 'client' ? organisation.body.id : undefined })
        const added = await this.admin.post(`/api/projects/${project.body.id}/members`, { personId: person.id, role })
        if (added.status !== 201) throw new Error(`adding the other project's ${role} answered ${added.status}`)
        members[role] = await signedIn(person.email, person.password)
        passwords[role] = person.password
      }
      return { organisationId: organisation.body.id, organisationName, projectId: project.body.id, projectNumber, projectName, passwords, ...members }
    })
  }

  /**
   * Texts found only in the records of the other project (its number, name and organisation). No answer to a
   * person who is not a member of it may hold one; made on first use, so call it before the cells run.
   */
  async elsewhereMarkers(): Promise<string[]> {
    const other = await this.other()
    return [other.projectNumber, other.projectName, other.organisationName]
  }

  personId(email: string): Promise<number> {
    return this.onceForBoth(`person:${email}`, async () => {
      const [row] = await database()`select id from people where email = ${email}`
      return row!.id as number
    })
  }

  /** The project of this place: NWD-214 at home, the other organisation's project elsewhere. */
  projectId(): Promise<number> {
    if (this.place === 'elsewhere') return this.other().then((other) => other.projectId)
    return this.once('project:NWD-214', async () => {
      const [row] = await database()`select id from projects where number = 'NWD-214'`
      return row!.id as number
    })
  }

  /** The project of this place (the name is older than the two places: at home it is the demo project NWD-214). */
  demoProjectId(): Promise<number> {
    return this.projectId()
  }

  /** The client organisation of this place's project. */
  organisationId(): Promise<number> {
    if (this.place === 'elsewhere') return this.other().then((other) => other.organisationId)
    return this.once('organisation:Northmere', async () => {
      const [row] = await database()`select id from organisations where name = 'Northmere Water District'`
      return row!.id as number
    })
  }

  demoOrganisationId(): Promise<number> {
    return this.organisationId()
  }

  /** A new project of this place's client organisation, without members. */
  async newProject(): Promise<number> {
    const answer = await this.admin.post('/api/projects', {
      number: unique('RT-').toUpperCase(),
      name: 'Route table sample',
      organisationId: await this.organisationId(),
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
    return this.onceForBoth('invitation', () => this.newInvitationToken())
  }

  /** A person who can sign in, kept for the sign-in row (so the demo accounts never meet a failure count). */
  signInPerson(): Promise<{ email: string; password: string }> {
    return this.onceForBoth('sign-in person', () => newPerson(this.admin, ['engineer']))
  }

  /** An engineer member of this place's project: the demo engineer at home, the other project's own elsewhere. */
  engineer(): Promise<Client> {
    if (this.place === 'elsewhere') return this.other().then((other) => other.engineer)
    return this.onceForBoth('engineer session', () => signedIn(demo.engineer))
  }
  /** A checker member of this place's project. */
  checker(): Promise<Client> {
    if (this.place === 'elsewhere') return this.other().then((other) => other.checker)
    return this.onceForBoth('checker session', () => signedIn(demo.checker))
  }
  /** A client member of this place's project (of its organisation). */
  client(): Promise<Client> {
    if (this.place === 'elsewhere') return this.other().then((other) => other.client)
    return this.onceForBoth('client session', () => signedIn(demo.client))
  }
  /** A draft sheet of this place's project (blank document), made once by its engineer. */
  sampleSheet(): Promise<{ id: number; document: unknown }> {
    return this.once('sheet', async () => {
      const engineer = await this.engineer()
      const created = await engineer.post(`/api/projects/${await this.projectId()}/sheets`, { title: 'Route table sample sheet', loopTag: 'TIC-214-99' })
      if (created.status !== 201) throw new Error(`creating a sample sheet answered ${created.status}`)
      const detail = await engineer.get(`/api/sheets/${created.body.id}`)
      return { id: created.body.id as number, document: detail.body.revision.document }
    })
  }
  /** A step-test CSV attached to the sample sheet by its engineer (tests/server/support/step-tests.ts). */
  sampleStepTestAttachment(): Promise<number> {
    return this.once('step-test attachment', async () => uploadStepTest(await this.engineer(), (await this.sampleSheet()).id))
  }
  /** The sample sheet's version now (a valid save bumps it). */
  async sampleSheetVersion(): Promise<number> {
    const [row] = await database()`select version from sheet_revisions where sheet_id = ${(await this.sampleSheet()).id}`
    return row!.version as number
  }
  /** A sheet of this place's project by its engineer whose revision is in check (set by SQL, as the workflow would). */
  sampleRevisionInCheck(): Promise<{ sheetId: number; revisionId: number }> {
    return this.once('revision in check', async () => {
      const engineer = await this.engineer()
      const created = await engineer.post(`/api/projects/${await this.demoProjectId()}/sheets`, { title: 'Route table sheet in check', loopTag: 'TIC-214-97' })
      if (created.status !== 201) throw new Error(`creating a sample sheet answered ${created.status}`)
      const [row] = await database()`update sheet_revisions set status = 'in check' where sheet_id = ${created.body.id} returning id`
      return { sheetId: created.body.id as number, revisionId: row!.id as number }
    })
  }
  async sampleRevisionVersion(): Promise<number> {
    const [row] = await database()`select version from sheet_revisions where id = ${(await this.sampleRevisionInCheck()).revisionId}`
    return row!.version as number
  }
  /** An open comment of this place's checker on the sample revision in check. */
  sampleComment(): Promise<number> {
    return this.once('comment', async () => {
      const { revisionId } = await this.sampleRevisionInCheck()
      const checker = await this.checker()
      const answer = await checker.post(`/api/revisions/${revisionId}/comments`, { version: await this.sampleRevisionVersion(), anchorKind: 'section', anchor: 'scope', body: 'Route table sample comment' })
      if (answer.status !== 201) throw new Error(`commenting answered ${answer.status}`)
      return answer.body.comments.at(-1).id as number
    })
  }
  /**
   * A new sheet of this place's project prepared by its engineer, taken through its life to `status` with the routes of
   * server/services/lifecycle.ts; answers its id and the version the next action names.
   */
  async sheetAt(status: 'draft' | 'in check' | 'approved' | 'issued', packageId?: number): Promise<{ id: number; version: number }> {
    const engineer = await this.engineer()
    const created = await engineer.post(`/api/projects/${await this.demoProjectId()}/sheets`, { title: unique('Route table life '), loopTag: 'TIC-214-97', packageId })
    if (created.status !== 201) throw new Error(`creating a sample sheet answered ${created.status}`)
    const id = created.body.id as number
    const step = async (who: Client, action: string, body: Record<string, unknown>) => {
      const answer = await who.post(`/api/sheets/${id}/${action}`, { version: 1, ...body })
      if (answer.status !== 200) throw new Error(`${action} of a sample sheet answered ${answer.status}: ${JSON.stringify(answer.body)}`)
    }
    if (status !== 'draft') await step(engineer, 'submit', {})
    const password = async (role: 'engineer' | 'checker') => (this.place === 'elsewhere' ? (await this.other()).passwords[role] : demoPassword)
    if (status === 'approved' || status === 'issued') await step(await this.checker(), 'approve', { password: await password('checker') })
    if (status === 'issued') {
      const issue = await issueSheetAndWait(engineer, id, { version: 1, purpose: 'review', password: await password('engineer') })
      if (issue.job?.body.status !== 'done') throw new Error(`issue of a sample sheet answered ${issue.request.status}: ${JSON.stringify(issue.job?.body ?? issue.request.body)}`)
    }
    return { id, version: 1 }
  }
  /** A new package of this place's project holding one approved sheet; answers the body of its issue. */
  async approvedPackage(): Promise<{ id: number; sheets: Array<{ sheetId: number; version: number }> }> {
    const engineer = await this.engineer()
    const made = await engineer.post(`/api/projects/${await this.demoProjectId()}/packages`, { title: unique('Route table package ') })
    if (made.status !== 201) throw new Error(`creating a sample package answered ${made.status}`)
    const sheet = await this.sheetAt('approved', made.body.id)
    return { id: made.body.id, sheets: [{ sheetId: sheet.id, version: sheet.version }] }
  }
  /** The revision of a sheet of this place's project taken to issued through the routes, made once. */
  sampleIssuedRevision(): Promise<number> {
    return this.once('issued revision', async () => {
      const sheet = await this.sheetAt('issued')
      const [row] = await database()`select id from sheet_revisions where sheet_id = ${sheet.id} and status = 'issued'`
      return row!.id as number
    })
  }
  /** One issue of a package of this place's project (one approved sheet), made once through the routes. */
  samplePackageIssue(): Promise<number> {
    return this.once('package issue', async () => {
      const made = await this.approvedPackage()
      const password = this.place === 'elsewhere' ? (await this.other()).passwords.engineer : demoPassword
      const issued = await issuePackageAndWait(await this.engineer(), made.id, { purpose: 'information', password, sheets: made.sheets })
      if (issued.job?.body.status !== 'done') throw new Error(`issuing a sample package answered ${issued.request.status}: ${JSON.stringify(issued.job?.body ?? issued.request.body)}`)
      const [row] = await database()`select id from package_issues where package_id = ${made.id}`
      return row!.id as number
    })
  }
  /** A new attachment (a small CSV) of the sample sheet's draft, uploaded by this place's engineer. */
  async newSampleAttachment(): Promise<number> {
    const sheet = await this.sampleSheet()
    const answer = await (await this.engineer()).upload(`/api/sheets/${sheet.id}/attachments`, 'route-table.csv', sampleCsv(), 'text/csv')
    if (answer.status !== 201) throw new Error(`uploading a sample attachment answered ${answer.status}: ${JSON.stringify(answer.body)}`)
    return answer.body.id as number
  }
  /** One attachment of the sample sheet's draft, made once. */
  sampleAttachment(): Promise<number> {
    return this.once('attachment', () => this.newSampleAttachment())
  }
  /** The id of the sample sheet's revision (a draft). */
  async sampleRevisionId(): Promise<number> {
    const [row] = await database()`select id from sheet_revisions where sheet_id = ${(await this.sampleSheet()).id}`
    return row!.id as number
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
    return this.onceForBoth('firm', async () => (await this.admin.get('/api/firm')).body)
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
  {
    method: 'POST',
    route: '/api/verify',
    // Anyone holding a PDF may ask; a hash of nothing issued answers 200 { issued: false } all the same.
    expect: everyone(200),
    prepare: async () => ({ body: { sha256: createHash('sha256').update(unique('route table verify')).digest('hex') } }),
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
    scope: 'project',
    // Every demo caller is a member of NWD-214 (scripts/demo-people.ts); none of them of the project elsewhere.
    expect: signedInOnly(200),
    prepare: async (kit) => ({ params: { id: String(await kit.demoProjectId()) } }),
  },
  {
    method: 'POST',
    route: '/api/projects/[id]/members',
    scope: 'project',
    expect: onlyRoles(201, 'admin'),
    prepare: async (kit) => ({
      params: { id: String(await kit.newProject()) },
      body: { personId: await kit.newInvitedPerson(['engineer']), role: 'engineer' },
    }),
  },
  {
    method: 'DELETE',
    route: '/api/projects/[id]/members/[personId]',
    scope: 'project',
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
  { method: 'GET', route: '/api/audit/actions', expect: onlyRoles(200, 'admin'), prepare: async () => ({}) },
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
    route: '/api/attachments/[id]/step-fit',
    // A tool of the sheet's staff: admins and the project's engineers and checkers; never a client (issue 10).
    expect: onlyRoles(200, 'engineer', 'checker', 'admin'),
    scope: 'project',
    prepare: async (kit) => ({ params: { id: String(await kit.sampleStepTestAttachment()) }, body: { columns: { time: 1, output: 2, process: 3 }, stepTime: 10 } }),
    // A record without a time column is a valid choice.
    accepts: { 'columns.time': ['null'] },
    badBodies: (valid) => [{ ...(valid as object), sampleTime: 0 }, { ...(valid as object), columns: { time: 1, output: 1, process: 3 } }, { ...(valid as object), extra: 1 }],
  },
  {
    method: 'POST',
    route: '/api/tuning',
    expect: onlyRoles(200, 'engineer', 'checker', 'admin'),
    prepare: async () => ({ body: { rule: 'lambda-pi', model: { gain: 1.4, timeConstant: 6, deadTime: 2 }, closedLoopTimeConstant: 6 } }),
    // A reverse-acting plant has a negative gain.
    accepts: { 'model.gain': ['-1'] },
    badBodies: (valid) => [{ ...(valid as object), rule: 'zn-pi', model: { gain: 1, timeConstant: 5, deadTime: 0 } }, { ...(valid as object), closedLoopTimeConstant: undefined }],
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
  // Sheets and packages: every demo caller is a member of NWD-214, none of the project elsewhere (`scope`). Drafts
  // against issued revisions, and a second engineer, are in tests/server/sheets-access.test.ts.
  {
    method: 'GET',
    route: '/api/projects/[id]/sheets',
    scope: 'project',
    expect: signedInOnly(200),
    list: true,
    prepare: async (kit) => ({ params: { id: String(await kit.demoProjectId()) } }),
  },
  {
    method: 'POST',
    route: '/api/projects/[id]/sheets',
    scope: 'project',
    expect: onlyRoles(201, 'engineer'),
    prepare: async (kit) => ({ params: { id: String(await kit.demoProjectId()) }, body: { title: unique('Route table sheet '), loopTag: 'TIC-214-98' } }),
  },
  { method: 'GET', route: '/api/sheets', expect: signedInOnly(200), list: true, prepare: async () => ({}) },
  // Anyone signed in: a person who is no checker gets an empty queue.
  { method: 'GET', route: '/api/check-queue', expect: signedInOnly(200), prepare: async () => ({}) },
  {
    method: 'GET',
    route: '/api/sheets/[id]',
    scope: 'project',
    // A draft: a client never sees one (product.md). A sheet issued once and revised since opens to the client at its
    // issued revision: tests/server/client-revision-view.test.ts.
    expect: { signedOut: 401, admin: 200, engineer: 200, checker: 200, client: 403 },
    prepare: async (kit) => ({ params: { id: String((await kit.sampleSheet()).id) } }),
  },
  {
    method: 'PATCH',
    route: '/api/sheets/[id]',
    scope: 'project',
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
    scope: 'project',
    expect: signedInOnly(200),
    prepare: async (kit) => ({ params: { id: String(await kit.demoProjectId()) } }),
  },
  {
    method: 'POST',
    route: '/api/projects/[id]/packages',
    scope: 'project',
    expect: onlyRoles(201, 'engineer'),
    prepare: async (kit) => ({ params: { id: String(await kit.demoProjectId()) }, body: { title: unique('Route table package ') } }),
  },
  // A sheet's life (server/services/lifecycle.ts): each call gets a new sheet in the state the action leaves. The
  // demo admin is no member of NWD-214, so acts on none; the client never sees a sheet before it is issued.
  {
    method: 'POST',
    route: '/api/sheets/[id]/submit',
    scope: 'project',
    expect: { signedOut: 401, admin: 403, engineer: 200, checker: 403, client: 403 },
    prepare: async (kit) => ({ params: { id: String((await kit.sheetAt('draft')).id) }, body: { version: 1 } }),
  },
  {
    method: 'POST',
    route: '/api/sheets/[id]/return',
    scope: 'project',
    expect: { signedOut: 401, admin: 403, engineer: 403, checker: 200, client: 403 },
    prepare: async (kit) => ({ params: { id: String((await kit.sheetAt('in check')).id) }, body: { version: 1, reason: 'See the comments on the plant model.' } }),
  },
  {
    method: 'POST',
    route: '/api/sheets/[id]/approve',
    scope: 'project',
    expect: { signedOut: 401, admin: 403, engineer: 403, checker: 200, client: 403 },
    prepare: async (kit) => ({ params: { id: String((await kit.sheetAt('in check')).id) }, body: { version: 1, password: demoPassword } }),
  },
  {
    method: 'POST',
    route: '/api/sheets/[id]/issue',
    scope: 'project',
    // 202: the render and the issue are a job (GET /api/jobs/[id]).
    expect: { signedOut: 401, admin: 403, engineer: 202, checker: 403, client: 403 },
    prepare: async (kit) => ({ params: { id: String((await kit.sheetAt('approved')).id) }, body: { version: 1, purpose: 'review', password: demoPassword } }),
  },
  {
    method: 'POST',
    route: '/api/sheets/[id]/revise',
    scope: 'project',
    // An issued revision: the client may see it, but only an engineer member starts the next one.
    expect: { signedOut: 401, admin: 403, engineer: 200, checker: 403, client: 403 },
    prepare: async (kit) => ({ params: { id: String((await kit.sheetAt('issued')).id) }, body: { version: 1 } }),
  },
  {
    method: 'POST',
    route: '/api/packages/[id]/issue',
    scope: 'project',
    // 202: the render and the issue are a job (GET /api/jobs/[id]).
    expect: { signedOut: 401, admin: 403, engineer: 202, checker: 403, client: 403 },
    prepare: async (kit) => {
      const made = await kit.approvedPackage()
      return { params: { id: String(made.id) }, body: { purpose: 'information', password: demoPassword, sheets: made.sheets } }
    },
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
  // Review (branch review): comments, history, diff and the recomputation. The sample sheets are drafts or in
  // check, which a client never sees; issued revisions against clients are in tests/server/review-*.test.ts.
  {
    method: 'GET',
    route: '/api/revisions/[id]/comments',
    scope: 'project',
    expect: { signedOut: 401, admin: 200, engineer: 200, checker: 200, client: 403 },
    prepare: async (kit) => ({ params: { id: String((await kit.sampleRevisionInCheck()).revisionId) } }),
  },
  {
    method: 'POST',
    route: '/api/revisions/[id]/comments',
    scope: 'project',
    // Only a checker of the project who did not prepare the revision comments (issue 8, item 3).
    expect: onlyRoles(201, 'checker'),
    prepare: async (kit) => ({
      params: { id: String((await kit.sampleRevisionInCheck()).revisionId) },
      body: { version: await kit.sampleRevisionVersion(), anchorKind: 'section', anchor: 'scope', body: 'Route table comment' },
    }),
  },
  {
    method: 'PATCH',
    route: '/api/comments/[id]',
    scope: 'project',
    // The engineer answers; resolving is a checker's (tests/server/review-comments.test.ts).
    expect: onlyRoles(200, 'engineer'),
    prepare: async (kit) => ({
      params: { id: String(await kit.sampleComment()) },
      body: { action: 'answer', version: await kit.sampleRevisionVersion(), answer: 'Route table answer' },
    }),
  },
  {
    method: 'GET',
    route: '/api/sheets/[id]/revisions',
    scope: 'project',
    expect: { signedOut: 401, admin: 200, engineer: 200, checker: 200, client: 403 },
    prepare: async (kit) => ({ params: { id: String((await kit.sampleSheet()).id) } }),
  },
  {
    method: 'GET',
    route: '/api/sheets/[id]/diff',
    scope: 'project',
    expect: { signedOut: 401, admin: 200, engineer: 200, checker: 200, client: 403 },
    prepare: async (kit) => ({ params: { id: String((await kit.sampleSheet()).id) }, query: { from: '0', to: '0' } }),
  },
  {
    method: 'GET',
    route: '/api/revisions/[id]/recomputation',
    scope: 'project',
    expect: { signedOut: 401, admin: 200, engineer: 200, checker: 200, client: 403 },
    prepare: async (kit) => ({ params: { id: String((await kit.sampleRevisionInCheck()).revisionId) } }),
  },
  {
    method: 'GET',
    route: '/api/revisions/[id]/pdf',
    scope: 'project',
    // A draft's preview: a client never sees one; the issued case is in tests/server/pdf.test.ts.
    expect: { signedOut: 401, admin: 200, engineer: 200, checker: 200, client: 403 },
    prepare: async (kit) => ({ params: { id: String(await kit.sampleRevisionId()) } }),
  },
  // Attachments (server/services/attachments.ts; tests/server/attachments.test.ts): the sheet's permissions, on a
  // draft here, so a client sees none; uploads and deletions by engineer members only.
  {
    method: 'POST',
    route: '/api/sheets/[id]/attachments',
    scope: 'project',
    expect: { signedOut: 401, admin: 403, engineer: 201, checker: 403, client: 403 },
    prepare: async (kit) => ({ params: { id: String((await kit.sampleSheet()).id) }, body: formWith('route-table.csv', sampleCsv(), 'text/csv') }),
    badForms: () => {
      const forms: FormData[] = []
      const add = (fill: (form: FormData) => void) => {
        const form = new FormData()
        fill(form)
        forms.push(form)
      }
      const file = () => new Blob([sampleCsv()], { type: 'text/csv' })
      add(() => undefined) // no field at all
      add((form) => form.append('file', 'text, not a file'))
      add((form) => form.append('upload', file(), 'x.csv'))
      add((form) => (form.append('file', file(), 'a.csv'), form.append('file', file(), 'b.csv')))
      for (const name of ['../x.csv', 'a/b.csv', 'a\\b.csv', 'nul\u0000.csv', 'tab\t.csv', 'x'.repeat(100_000), '']) {
        add((form) => form.append('file', file(), name))
      }
      add((form) => form.append('file', new Blob([]), 'empty.csv'))
      add((form) => form.append('file', new Blob([new Uint8Array([0x4d, 0x5a, 0x90, 0x00, 0x03, 0x00])]), 'program.pdf'))
      return forms
    },
  },
  {
    method: 'GET',
    route: '/api/sheets/[id]/attachments',
    scope: 'project',
    expect: { signedOut: 401, admin: 200, engineer: 200, checker: 200, client: 403 },
    prepare: async (kit) => ({ params: { id: String((await kit.sampleSheet()).id) } }),
  },
  {
    method: 'GET',
    route: '/api/attachments/[id]',
    scope: 'project',
    expect: { signedOut: 401, admin: 200, engineer: 200, checker: 200, client: 403 },
    prepare: async (kit) => ({ params: { id: String(await kit.sampleAttachment()) } }),
  },
  {
    method: 'DELETE',
    route: '/api/attachments/[id]',
    scope: 'project',
    expect: { signedOut: 401, admin: 403, engineer: 200, checker: 403, client: 403 },
    prepare: async (kit) => ({ params: { id: String(await kit.newSampleAttachment()) } }),
  },
  {
    method: 'POST',
    route: '/api/revisions/[id]/acknowledge',
    scope: 'project',
    // Only a client of the project's organisation acknowledges; once each, a repeat answers the first's time.
    expect: { signedOut: 401, admin: 403, engineer: 403, checker: 403, client: 200 },
    prepare: async (kit) => ({ params: { id: String(await kit.sampleIssuedRevision()) }, body: {} }),
  },
  // The client's portal: for a client only (tests/server/portal.test.ts).
  { method: 'GET', route: '/api/portal', expect: onlyRoles(200, 'client'), prepare: async () => ({}) },
  {
    method: 'GET',
    route: '/api/package-issues/[id]/pdf',
    scope: 'project',
    expect: { signedOut: 401, admin: 200, engineer: 200, checker: 200, client: 200 },
    prepare: async (kit) => ({ params: { id: String(await kit.samplePackageIssue()) } }),
  },
  {
    method: 'GET',
    route: '/api/print/[token]',
    // The PDF renderer's own route: only a render token its process made opens it, never a session.
    expect: everyone(403),
    prepare: async () => ({ params: { token: 'not-a-render-token.x' } }),
  },
  {
    method: 'GET',
    route: '/api/package-print/[token]',
    // The package cover's data for the PDF renderer: only a cover token of its own process, never a session.
    expect: everyone(403),
    prepare: async () => ({ params: { token: 'not-a-cover-token' } }),
  },
]

/** The path of `row` with `params` put in (as given: a bad-input shape such as `%00` goes as it is). */
export function pathOf(row: RouteRow, params: Record<string, string> = {}, query?: Record<string, string>): string {
  const search = query ? `?${Object.entries(query).map(([name, value]) => `${name}=${value}`).join('&')}` : ''
  return `${pathWithParams(row, params)}${search}`
}

function pathWithParams(row: RouteRow, params: Record<string, string>): string {
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

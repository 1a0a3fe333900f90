// Fixtures of the sheet tests: the demo project's people by role, a second project none of them belongs to,
// and sheets made through the API.
import { readFileSync } from 'node:fs'
import { expect } from 'vitest'
import { Client, database, demo, newPerson, signedIn, unique } from './client'

export const readTemplate = (name: string) => JSON.parse(readFileSync(new URL(`../../../sheets/${name}.json`, import.meta.url), 'utf8'))

export interface Cast {
  admin: Client
  engineer: Client
  secondEngineer: Client
  checker: Client
  client: Client
  /** An engineer who is a member of `otherProjectId` only. */
  outsider: Client
  signedOut: Client
  ids: { engineer: number; secondEngineer: number; outsider: number }
  demoProjectId: number
  otherProjectId: number
}

let cast: Promise<Cast> | undefined

async function personId(email: string): Promise<number> {
  const [row] = await database()`select id from people where email = ${email}`
  return row!.id
}

/** Everyone the tests sign in as, signed in once per test file. */
export function theCast(): Promise<Cast> {
  cast ??= (async () => {
    const admin = await signedIn(demo.admin)
    const [project] = await database()`select id, organisation_id from projects where number = 'NWD-214'`
    const other = await admin.post('/api/projects', { number: unique('OTHER-').toUpperCase(), name: 'Another client’s works', organisationId: project!.organisation_id })
    expect(other.status).toBe(201)
    const outsider = await newPerson(admin, ['engineer'], { name: 'Outside Engineer' })
    expect((await admin.post(`/api/projects/${other.body.id}/members`, { personId: outsider.id, role: 'engineer' })).status).toBe(201)
    return {
      admin,
      engineer: await signedIn(demo.engineer),
      secondEngineer: await signedIn(demo.secondEngineer),
      checker: await signedIn(demo.checker),
      client: await signedIn(demo.client),
      outsider: await signedIn(outsider.email, outsider.password),
      signedOut: new Client(),
      ids: { engineer: await personId(demo.engineer), secondEngineer: await personId(demo.secondEngineer), outsider: outsider.id },
      demoProjectId: project!.id,
      otherProjectId: other.body.id,
    }
  })()
  return cast
}

/** A new sheet made by `engineer` in `projectId`; answers its id, number and the detail. */
export async function newSheet(engineer: Client, projectId: number, body: Record<string, unknown> = {}) {
  const created = await engineer.post(`/api/projects/${projectId}/sheets`, { title: unique('Test sheet '), loopTag: 'TIC-900-01', ...body })
  if (created.status !== 201) throw new Error(`creating a sheet answered ${created.status}: ${JSON.stringify(created.body)}`)
  const detail = await engineer.get(`/api/sheets/${created.body.id}`)
  return { id: created.body.id as number, number: created.body.number as string, detail: detail.body }
}

/** Sets a revision's status directly, as the workflow (a later issue) will: checks what each status allows. */
export async function setStatus(sheetId: number, status: string) {
  await database()`update sheet_revisions set status = ${status} where sheet_id = ${sheetId}`
}

/** The newest audit row of `action` on `path`. */
export async function lastAudit(action: string, path: string) {
  const [row] = await database()`select actor_id, action, status, method, path, subject_id, detail from audit_events
    where action = ${action} and path = ${path} order by id desc limit 1`
  return row
}

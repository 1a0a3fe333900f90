// The demo scenario of product.md (invented): Cobalt Ridge Engineering, its client Northmere Water District,
// project NWD-214 and its people, and the package of its four demo loops as draft sheets with their results
// computed. Safe to run twice: what exists is left as it is, nothing is duplicated.
import { readFileSync } from 'node:fs'
import postgres from 'postgres'
import { drizzle } from 'drizzle-orm/postgres-js'
import { and, eq, inArray } from 'drizzle-orm'
import { Hash } from '@adonisjs/hash'
import { Scrypt } from '@adonisjs/hash/drivers/scrypt'
import * as schema from '../server/db/schema'
import { firmSettings, organisations, packages, people, projectMembers, projects, sheets } from '../server/db/schema'
import { createSheet, isRefused, type Computation } from '../server/services/sheets'
import { sheetTemplateSchema, type SheetTemplate } from '../shared/schemas/sheets'
import { CalcTimeoutError, LoopInputError, evaluateLoopText } from '../shared/calc/index'
import { demoPassword, demoPeople } from './demo-people'

/** The engine in this process, answering as the server's worker pool does. */
async function computeHere(text: string): Promise<Computation> {
  try {
    return { ok: true, result: evaluateLoopText(text) }
  } catch (error) {
    if (error instanceof LoopInputError) return { ok: false, kind: 'input', field: error.field, message: error.message }
    if (error instanceof CalcTimeoutError) return { ok: false, kind: 'timeout', message: error.message }
    throw error
  }
}

function template(name: string): SheetTemplate {
  return sheetTemplateSchema.parse(JSON.parse(readFileSync(new URL(`../sheets/${name}.json`, import.meta.url), 'utf8')))
}

/** The four loops of the Hollins Booster Station (product.md, "Demo scenario"), each from the template it fits. */
const demoSheets = [
  {
    loopTag: 'PIC-214-01',
    title: 'Hollins booster pumps: discharge pressure',
    template: 'pi-pressure-loop',
    scope: 'Discharge pressure loop of the Hollins booster pump set: PI controller, variable-speed drive, pump and discharge header, pressure transmitter.',
  },
  {
    loopTag: 'LIC-214-02',
    title: 'Hollins clearwell: level',
    template: 'integrating-level-loop',
    scope: 'Level loop of the Hollins clearwell: PI controller on the outlet control valve, the clearwell as an integrating process, level transmitter.',
  },
  {
    loopTag: 'FIC-214-03',
    title: 'Hollins chlorine dosing: flow',
    template: 'dead-time-flow-loop',
    scope: 'Chlorine dosing flow loop at the Hollins booster station: PI controller on the dosing pump and line, a first-order process with dead time fitted from a step test.',
  },
  {
    loopTag: 'LIC-214-04',
    title: 'Hollins clearwell: level over outlet flow (cascade)',
    template: 'cascade-loop',
    scope: 'Cascade at the Hollins clearwell: the level controller (outer loop) sets the outlet flow controller’s set point (inner loop).',
  },
]

const url = process.env.NUXT_DATABASE_URL
if (!url) throw new Error('NUXT_DATABASE_URL is not set (see scripts/app-env)')

// nuxt-auth-utils' hashPassword is only reachable inside Nitro; it is @adonisjs/hash's scrypt driver with its
// default options (nuxt.config sets none), so hashes made here verify with the app's verifyPassword.
const hasher = new Hash(new Scrypt({}))

const sql = postgres(url, { max: 1, onnotice: () => {} })
const db = drizzle(sql, { schema })

try {
  await db
    .insert(firmSettings)
    .values({
      id: 1,
      name: 'Cobalt Ridge Engineering',
      sheetNumbering: '{project}-{seq:02}',
      paperSize: 'A4',
      defaultCautions: [
        'This calculation supports, and never replaces, the judgement of the responsible licensed engineer.',
        'Verify tuning on site under controlled conditions, with the process in a safe state.',
        'A basic control loop is not a safety function: safety instrumented functions follow their own standards and local codes.',
        'Confirm the fail-safe position of every final element.',
        'Where local codes or licensed practice differ from this sheet, they govern.',
      ],
    })
    .onConflictDoNothing()

  await db.insert(organisations).values({ name: 'Northmere Water District' }).onConflictDoNothing()
  const [northmere] = await db.select().from(organisations).where(eq(organisations.name, 'Northmere Water District'))

  await db
    .insert(projects)
    .values({ number: 'NWD-214', name: 'Hollins Booster Station upgrade', organisationId: northmere!.id })
    .onConflictDoNothing()
  const [project] = await db.select().from(projects).where(eq(projects.number, 'NWD-214'))

  const emails = demoPeople.map((person) => person.email)
  const existing = new Set(
    (await db.select({ email: people.email }).from(people).where(inArray(people.email, emails))).map((row) => row.email),
  )
  for (const person of demoPeople.filter((p) => !existing.has(p.email))) {
    await db
      .insert(people)
      .values({
        name: person.name,
        email: person.email,
        roles: [...person.roles],
        passwordHash: await hasher.make(demoPassword),
        organisationId: person.projectRole === 'client' ? northmere!.id : null,
      })
      .onConflictDoNothing()
  }

  const seeded = await db.select().from(people).where(inArray(people.email, emails))
  for (const person of demoPeople) {
    if (!person.projectRole) continue
    const row = seeded.find((candidate) => candidate.email === person.email)!
    await db
      .insert(projectMembers)
      .values({ projectId: project!.id, personId: row.id, role: person.projectRole })
      .onConflictDoNothing()
  }

  // The demo package and its sheets, prepared by the demo engineer.
  const engineer = seeded.find((person) => person.email === 'tomas.okafor@example.com')!
  const packageTitle = 'Hollins Booster Station control loops'
  await db.insert(packages).values({ projectId: project!.id, number: 'P01', title: packageTitle, createdBy: engineer.id }).onConflictDoNothing()
  const [demoPackage] = await db
    .select()
    .from(packages)
    .where(and(eq(packages.projectId, project!.id), eq(packages.number, 'P01')))
  const context = { actorId: engineer.id, ip: null, method: null, path: 'scripts/seed.ts' }
  const viewer = { id: engineer.id, roles: [...engineer.roles] as Array<'engineer'> }
  let made = 0
  for (const demo of demoSheets) {
    const [exists] = await db
      .select({ id: sheets.id })
      .from(sheets)
      .where(and(eq(sheets.projectId, project!.id), eq(sheets.loopTag, demo.loopTag)))
    if (exists) continue
    const base = template(demo.template)
    const readTemplate = async () => ({ ...base, document: { ...base.document, scope: demo.scope } })
    const created = await createSheet(
      db,
      project!.id,
      { title: demo.title, loopTag: demo.loopTag, packageId: demoPackage!.id, template: demo.template },
      viewer,
      context,
      { compute: computeHere, readTemplate },
    )
    if (isRefused(created)) throw new Error(`the demo sheet ${demo.loopTag} was refused: ${created.refused}`)
    made++
  }
  console.log(`demo data in place: ${seeded.length} people, project ${project!.number}, ${made} new demo sheets`)
} finally {
  await sql.end()
}

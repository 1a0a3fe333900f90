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
import { createSheet, isRefused, saveSheet, viewSheet, type Computation } from '../server/services/sheets'
import { listSheetAttachments, uploadAttachment } from '../server/services/attachments'
import { createObjectStore } from '../server/services/object-store'
import { fitStepTest } from '../shared/calc/step-fit'
import { readStepRecord } from '../shared/calc/step-test'
import { tune } from '../shared/calc/tuning'
import { shortHash } from '../shared/schemas/attachments'
import { syntheticStepCsv } from './lib/synthetic-step-test'
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

/**
 * The dosing-flow sheet's step test (issue 10, item 5): an INVENTED record, the sampled step response of a known
 * first-order-plus-dead-time plant (K = 1.45 %/%, τ = 6.4 s, θ = 2.2 s) with seeded noise, attached to FIC-214-03,
 * fitted by least squares, its model put into the plant block P with the upload cited, and the PI controller tuned by
 * SIMC. Done once: a sheet that already holds the record is left as it is. Answers whether it was done now.
 */
const DOSING_RECORD = 'FIC-214-03-step-test-INVENTED.csv'
async function seedDosingStepTest(projectId: number, viewer: { id: number; roles: Array<'engineer'> }, context: { actorId: number; ip: null; method: null; path: string }): Promise<boolean> {
  const [sheet] = await db.select({ id: sheets.id }).from(sheets).where(and(eq(sheets.projectId, projectId), eq(sheets.loopTag, 'FIC-214-03')))
  if (!sheet) return false
  const store = createObjectStore({
    endpoint: process.env.NUXT_OBJECT_STORE_ENDPOINT ?? '',
    region: process.env.NUXT_OBJECT_STORE_REGION ?? 'us-east-1',
    bucket: process.env.NUXT_OBJECT_STORE_BUCKET ?? '',
    accessKeyId: process.env.NUXT_OBJECT_STORE_ACCESS_KEY_ID ?? '',
    secretAccessKey: process.env.NUXT_OBJECT_STORE_SECRET_ACCESS_KEY ?? '',
    forcePathStyle: process.env.NUXT_OBJECT_STORE_FORCE_PATH_STYLE === 'true',
  })
  const listed = await listSheetAttachments(db, sheet.id, viewer)
  if (isRefused(listed) || !listed.canUpload || listed.attachments.some((a) => a.name === DOSING_RECORD)) return false
  const csv = syntheticStepCsv(
    { gain: 1.45, timeConstant: 6.4, deadTime: 2.2, sampleTime: 0.1, samples: 900, stepTime: 10, outputBefore: 35, outputAfter: 45, baseline: 41, noise: 0.12, seed: 21403 },
    'time (s),pump speed demand (%),dosing flow (%)',
  )
  const uploaded = await uploadAttachment(db, sheet.id, { name: DOSING_RECORD, bytes: Buffer.from(csv) }, viewer, context, store)
  if (isRefused(uploaded)) throw new Error(`the demo step test was refused: ${uploaded.refused}`)
  const fit = fitStepTest(readStepRecord(csv)).leastSquares
  const tuning = tune({ rule: 'simc-pi', model: fit })
  const detail = await viewSheet(db, sheet.id, viewer)
  if (isRefused(detail)) throw new Error(`the demo sheet FIC-214-03 was refused: ${detail.refused}`)
  const document = structuredClone(detail.revision.document)
  const figure = (x: number) => Number(x.toPrecision(4))
  const fitted = `Fitted by least squares on the step response from the step test ${DOSING_RECORD} (SHA-256 ${shortHash(uploaded.sha256)}), attached to this sheet`
  const tuned = `SIMC PI tuning (Skogestad, J. Process Control 13 (2003) 291–309) for plant P: K = ${figure(fit.gain)}, τ = ${figure(fit.timeConstant)} s, θ = ${figure(fit.deadTime)} s, τc = θ`
  const set = (symbol: string, value: number, source: string) => {
    const parameter = document.loop.parameters[symbol]!
    const ratio = value / parameter.value
    document.loop.parameters[symbol] = {
      ...parameter,
      value,
      ...(parameter.min === undefined ? {} : { min: figure(parameter.min * ratio) }),
      ...(parameter.max === undefined ? {} : { max: figure(parameter.max * ratio) }),
    }
    document.parameters.find((p) => p.symbol === symbol)!.source = source
  }
  set('Kp', figure(fit.gain), fitted)
  set('T', figure(fit.timeConstant), fitted)
  set('L', figure(fit.deadTime), fitted)
  set('Kc', figure(tuning.settings.gain), tuned)
  set('Ti', figure(tuning.settings.integralTime), tuned)
  const record = document.references.find((r) => r.title.startsWith('Step test record'))
  if (record) record.note = `${DOSING_RECORD}: an invented record for the demonstration (generated from a known model with seeded noise), not a measurement. Fitted first-order-plus-dead-time model.`
  const saved = await saveSheet(db, sheet.id, { version: detail.revision.version, document }, viewer, context, computeHere)
  if (isRefused(saved)) throw new Error(`saving the demo sheet FIC-214-03 was refused: ${saved.refused}`)
  return true
}

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
      // The firm's own standing cautions (invented); the product's cautions print on every sheet anyway (product.md).
      defaultCautions: [
        'Check the loop against the current revision of its loop drawing and the instrument index before any setting is changed; a tag, range or signal that differs stops the work until this sheet is revised.',
        'Instrument ranges and engineering units are those of the instrument index at the date of this sheet: confirm them against the installed transmitter and the control system configuration.',
        'Record the settings as found and as left on the loop’s commissioning record, signed by the commissioning engineer.',
        'Send questions on this sheet through Cobalt Ridge document control, quoting the sheet number and revision.',
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
  const stepTest = await seedDosingStepTest(project!.id, viewer, context)
  console.log(`demo data in place: ${seeded.length} people, project ${project!.number}, ${made} new demo sheets${stepTest ? ', the dosing step test attached, fitted and tuned' : ''}`)
} finally {
  await sql.end()
}

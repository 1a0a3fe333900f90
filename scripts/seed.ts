// The demo scenario of product.md (invented): Cobalt Ridge Engineering, its client Northmere Water District,
// project NWD-214 and its people. Safe to run twice: what exists is left as it is, nothing is duplicated.
import postgres from 'postgres'
import { drizzle } from 'drizzle-orm/postgres-js'
import { eq, inArray } from 'drizzle-orm'
import { Hash } from '@adonisjs/hash'
import { Scrypt } from '@adonisjs/hash/drivers/scrypt'
import { firmSettings, organisations, people, projectMembers, projects } from '../server/db/schema'
import { demoPassword, demoPeople } from './demo-people'

const url = process.env.NUXT_DATABASE_URL
if (!url) throw new Error('NUXT_DATABASE_URL is not set (see scripts/app-env)')

// nuxt-auth-utils' hashPassword is only reachable inside Nitro; it is @adonisjs/hash's scrypt driver with its
// default options (nuxt.config sets none), so hashes made here verify with the app's verifyPassword.
const hasher = new Hash(new Scrypt({}))

const sql = postgres(url, { max: 1, onnotice: () => {} })
const db = drizzle(sql)

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
  console.log(`demo data in place: ${seeded.length} people, project ${project!.number}`)
} finally {
  await sql.end()
}

// Applies the committed migrations in drizzle/ to NUXT_DATABASE_URL. Run by scripts/serve and the tests' set-up.
import postgres from 'postgres'
import { drizzle } from 'drizzle-orm/postgres-js'
import { migrate } from 'drizzle-orm/postgres-js/migrator'
import { fileURLToPath } from 'node:url'

const url = process.env.NUXT_DATABASE_URL
if (!url) throw new Error('NUXT_DATABASE_URL is not set (see scripts/app-env)')

const sql = postgres(url, { max: 1, onnotice: () => {} })
try {
  await migrate(drizzle(sql), { migrationsFolder: fileURLToPath(new URL('../drizzle', import.meta.url)) })
  console.log('migrations applied')
} finally {
  await sql.end()
}

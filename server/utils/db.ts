// The one PostgreSQL connection pool of the app, from runtimeConfig.databaseUrl (NUXT_DATABASE_URL).
import postgres from 'postgres'
import { drizzle, type PostgresJsDatabase } from 'drizzle-orm/postgres-js'
import * as schema from '../db/schema'

export type Database = PostgresJsDatabase<typeof schema>

let database: Database | undefined

export function useDb(): Database {
  if (!database) {
    const url = useRuntimeConfig().databaseUrl
    if (!url) throw new Error('runtimeConfig.databaseUrl is empty: set NUXT_DATABASE_URL (scripts/app-env)')
    database = drizzle(postgres(url, { max: 10, onnotice: () => {} }), { schema })
  }
  return database
}

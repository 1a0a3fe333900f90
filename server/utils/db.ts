// The one PostgreSQL connection pool of the app, from runtimeConfig.databaseUrl (NUXT_DATABASE_URL).
import postgres from 'postgres'
import { drizzle, type PostgresJsDatabase } from 'drizzle-orm/postgres-js'
import * as schema from '../db/schema'

export type Database = PostgresJsDatabase<typeof schema>

let database: Database | undefined
let client: postgres.Sql | undefined

export function useDb(): Database {
  if (!database) {
    const url = useRuntimeConfig().databaseUrl
    if (!url) throw new Error('runtimeConfig.databaseUrl is empty: set NUXT_DATABASE_URL (scripts/app-env)')
    client = postgres(url, { max: 10, onnotice: () => {} })
    database = drizzle(client, { schema })
  }
  return database
}

/** The pool's own postgres.js client, for what drizzle does not wrap (LISTEN: server/plugins/background-work.ts). */
export function useSqlClient(): postgres.Sql {
  useDb()
  return client!
}

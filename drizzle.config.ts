// drizzle-kit: generates migrations from server/db/schema.ts into drizzle/ (committed).
// Migrations are applied by scripts/migrate.ts at start, not by drizzle-kit.
import { defineConfig } from 'drizzle-kit'

export default defineConfig({
  dialect: 'postgresql',
  schema: './server/db/schema.ts',
  out: './drizzle',
  dbCredentials: { url: process.env.NUXT_DATABASE_URL ?? '' },
})

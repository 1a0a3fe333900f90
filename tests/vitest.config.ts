import { fileURLToPath } from 'node:url'
import { defineConfig } from 'vitest/config'

const root = fileURLToPath(new URL('..', import.meta.url))

// Three projects: the engine alone; the server over HTTP against the built app
// and a real PostgreSQL; the browser, Debian's Chromium driven by puppeteer-core.
// The server and browser projects share one global set-up (tests/setup/app.ts)
// that creates the test database, migrates, seeds and starts the built app,
// and hands `baseUrl`, `mailApiUrl` and `databaseUrl` to the tests through inject().
export default defineConfig({
  root,
  resolve: { alias: { '#shared': `${root}shared` } },
  test: {
    projects: [
      {
        extends: true,
        test: { name: 'calc', include: ['tests/calc/**/*.test.ts'], environment: 'node', testTimeout: 120_000 },
      },
      {
        extends: true,
        test: {
          name: 'server',
          include: ['tests/server/**/*.test.ts'],
          globalSetup: ['tests/setup/app.ts'],
          fileParallelism: false,
          testTimeout: 60_000,
          hookTimeout: 180_000,
        },
      },
      {
        extends: true,
        test: {
          name: 'e2e',
          include: ['tests/e2e/**/*.test.ts'],
          globalSetup: ['tests/setup/app.ts'],
          fileParallelism: false,
          testTimeout: 90_000,
          hookTimeout: 180_000,
        },
      },
    ],
  },
})

// What tests/setup/app.ts hands to the server and browser tests through inject().
declare module 'vitest' {
  export interface ProvidedContext {
    /** The built app under test, e.g. http://127.0.0.1:3199 */
    baseUrl: string
    /** The test mail sink's HTTP side, e.g. http://127.0.0.1:2581 (GET/DELETE /messages) */
    mailApiUrl: string
    /** postgres:// URL of the test database loopwright_test */
    databaseUrl: string
    /** The instance's bucket in the test object store (scripts/object-store), to list what the app kept. */
    objectStore: { port: number; endpoint: string; region: string; bucket: string; accessKeyId: string; secretAccessKey: string }
  }
}

export {}

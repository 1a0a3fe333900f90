// Loopwright: Nuxt 4 application configuration.
import { bundleCalcWorker } from './server/workers/bundle'
import { GENERAL_BODY_BYTES } from './server/utils/request-limits'

export default defineNuxtConfig({
  compatibilityDate: '2026-11-01',
  modules: ['@pinia/nuxt', '@nuxtjs/tailwindcss', 'nuxt-auth-utils', 'nuxt-security'],
  devtools: { enabled: false },
  telemetry: false,
  css: ['~/assets/css/main.css'],
  app: {
    head: {
      title: 'Loopwright',
      htmlAttrs: { lang: 'en' },
      meta: [{ name: 'viewport', content: 'width=device-width, initial-scale=1' }],
    },
  },
  runtimeConfig: {
    databaseUrl: '',
    smtpHost: '127.0.0.1',
    smtpPort: 0,
    // The outbox worker and the job runner (server/plugins/background-work.ts); NUXT_OUTBOX_RETRY_BASE_MS etc.
    // shorten them in tests. 0 keeps the defaults of server/services/outbox-worker.ts and jobs.ts.
    outbox: { retryBaseMs: 0, claimSeconds: 0, maxAttempts: 0, pollMs: 0 },
    jobs: { claimSeconds: 0, retryBaseMs: 0, pollMs: 0 },
    // The sealed cookie (nuxt-auth-utils) lives as long as the server-side session may:
    // absoluteLifetimeHours of server/services/sessions.ts (12 h), in seconds.
    session: { maxAge: 12 * 60 * 60 },
    // Where attachments are stored (server/utils/object-store.ts): any S3-compatible store. The defaults are the
    // local fake of scripts/object-store (s3rver); NUXT_OBJECT_STORE_ENDPOINT etc. point it elsewhere, and an
    // empty endpoint means the hosted service's own for the region.
    objectStore: {
      endpoint: 'http://127.0.0.1:4568',
      region: 'us-east-1',
      bucket: 'loopwright',
      accessKeyId: 'S3RVER',
      secretAccessKey: 'S3RVER',
      forcePathStyle: true,
    },
    public: { appName: 'Loopwright', siteUrl: '' },
  },
  typescript: { strict: true },
  // Headers, CSP and request size limits (nuxt-security; DEVELOPERS.md, "Requests the server refuses").
  security: {
    headers: {
      contentSecurityPolicy: {
        'default-src': ["'self'"],
        'base-uri': ["'none'"],
        'connect-src': ["'self'"],
        // The fonts ship with the app (app/assets/css/main.css, KaTeX's own); small ones the build inlines as data: URLs.
        'font-src': ["'self'", 'data:'],
        'form-action': ["'self'"],
        'frame-ancestors': ["'none'"],
        'img-src': ["'self'", 'data:'],
        'object-src': ["'none'"],
        // Nuxt's hydration scripts carry the per-response nonce; the chunks they import are trusted through them.
        // No 'unsafe-eval': nothing in the app evaluates strings.
        'script-src': ["'self'", "'strict-dynamic'", "'nonce-{{nonce}}'"],
        'script-src-attr': ["'none'"],
        // <style> and stylesheets: our own files and the nonce'd ones Nuxt inlines. Style attributes are
        // allowed because KaTeX's markup positions every glyph with them (and the plots set a few).
        'style-src': ["'self'", "'nonce-{{nonce}}'"],
        'style-src-elem': ["'self'", "'nonce-{{nonce}}'"],
        'style-src-attr': ["'unsafe-inline'"],
        'worker-src': ["'self'"],
        // The app is served on plain http on loopback here; behind TLS the proxy upgrades.
        'upgrade-insecure-requests': false,
      },
      xFrameOptions: 'DENY',
      // Invitation links carry their token in the path: never send it on as a referrer.
      referrerPolicy: 'no-referrer',
    },
    // Declared sizes refused before anything is read; server/middleware/00.request-guard.ts also stops a body
    // that declares nothing (chunked) at the same limit, while reading it.
    requestSizeLimiter: { maxRequestSizeInBytes: GENERAL_BODY_BYTES + 1, maxUploadFileRequestInBytes: 8_000_000 },
    // Off: the calculator has its own per-person limits (server/services/calculation.ts) and sign-in its own
    // throttle, both per person rather than per client address; the module's limiter counts by address only,
    // and the test suites send hundreds of requests from 127.0.0.1.
    rateLimiter: false,
    // Off: it refuses any body with "<" in it (a note such as "valid for Kc < 2"); every body is validated by
    // its zod schema instead, and Vue escapes everything it renders.
    xssValidator: false,
    // Off: the app serves only its own origin, so no CORS headers are sent and browsers keep other sites from
    // reading answers; state-changing requests from other origins are refused by the request guard.
    corsHandler: false,
    removeLoggers: false,
  },
  routeRules: {
    // A dedicated worker (the sheet editor's live engine, app/workers/live-calc.ts) is refused by Chromium
    // (ERR_BLOCKED_BY_RESPONSE) unless its script carries the page's Cross-Origin-Embedder-Policy; nuxt-security
    // sets that policy on pages only, so the built scripts are given the same one here.
    '/_nuxt/**': { headers: { 'cross-origin-embedder-policy': 'credentialless' } },
    // The route stops reading at its own limit and answers 413 naming `file` (the request guard).
    '/api/calculate': { security: { requestSizeLimiter: false } },
    // The attachment upload likewise: up to 25 MiB, its 413 naming `file` (server/utils/request-limits.ts).
    '/api/sheets/*/attachments': { security: { requestSizeLimiter: false } },
  },
  // The loop templates engineers start from, bundled into the server (resolved from server/, hence ../).
  // The Noto face that stamps package page numbers (server/services/package-pdf.ts), the app's own @fontsource file:
  // WOFF, because @pdf-lib/fontkit's subsetter fails on the WOFF2 file (measured: "Index out of range").
  nitro: {
    serverAssets: [
      { baseName: 'sheets', dir: '../sheets' },
      { baseName: 'print-fonts', dir: '../node_modules/@fontsource/noto-sans/files', pattern: 'noto-sans-latin-400-normal.woff' },
    ],
  },
  hooks: {
    // The calculation engine runs in worker threads (server/utils/calc-pool.ts),
    // which start from a file of their own: bundle it after every server build.
    'nitro:init'(nitro) {
      nitro.hooks.hook('compiled', async () => {
        await bundleCalcWorker(nitro.options.rootDir, [nitro.options.output.serverDir, nitro.options.buildDir])
      })
    },
  },
})

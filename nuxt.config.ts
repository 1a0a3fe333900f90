// Loopwright: Nuxt 4 application configuration.
import { bundleCalcWorker } from './server/workers/bundle'

export default defineNuxtConfig({
  compatibilityDate: '2026-11-01',
  modules: ['@pinia/nuxt', '@nuxtjs/tailwindcss', 'nuxt-auth-utils'],
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
    // The sealed cookie (nuxt-auth-utils) lives as long as the server-side session may:
    // absoluteLifetimeHours of server/services/sessions.ts (12 h), in seconds.
    session: { maxAge: 12 * 60 * 60 },
    public: { appName: 'Loopwright', siteUrl: '' },
  },
  typescript: { strict: true },
  // The loop templates engineers start from, bundled into the server (resolved from server/, hence ../).
  nitro: { serverAssets: [{ baseName: 'sheets', dir: '../sheets' }] },
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

import { fileURLToPath } from 'node:url'

const fontDir = fileURLToPath(new URL('./node_modules/@fontsource/roboto-mono/files', import.meta.url))
const interDir = fileURLToPath(new URL('./node_modules/@fontsource/inter/files', import.meta.url))

export default defineNuxtConfig({
  compatibilityDate: '2025-07-15',
  devtools: { enabled: false },
  telemetry: false,
  modules: ['@pinia/nuxt', '@nuxtjs/tailwindcss', 'nuxt-auth-utils', '@nuxt/eslint'], // @nuxt/eslint only writes the lint config (eslint.config.mjs)
  css: ['~/assets/css/main.css', '~/assets/css/charts.css'],
  tailwindcss: { cssPath: false, configPath: 'tailwind.config.ts', viewer: false },
  app: {
    head: {
      title: 'Tercet',
      htmlAttrs: { lang: 'en' },
      meta: [{ name: 'viewport', content: 'width=device-width, initial-scale=1' }],
      link: [{ rel: 'icon', type: 'image/svg+xml', href: '/favicon.svg' }],
    },
  },
  runtimeConfig: {
    db: { host: '127.0.0.1', port: 3307, user: 'tercet', password: '', database: 'tercet' },
    migrateOnStart: false,
  },
  nitro: {
    ...(process.env.TERCET_OUTPUT_DIR ? { output: { dir: process.env.TERCET_OUTPUT_DIR } } : {}),
    serverAssets: [
      { baseName: 'fonts', dir: fontDir, pattern: 'roboto-mono-latin-{400,700}-normal.woff' },
      // embedded in certificates (server/services/certificates/fonts.ts)
      { baseName: 'certfonts-mono', dir: fontDir, pattern: 'roboto-mono-latin-{400,700}-normal.woff' },
      { baseName: 'certfonts-sans', dir: interDir, pattern: 'inter-latin-{400,600}-normal.woff' },
    ],
  },
  // the component tests (tests/app/, mirroring app/) are type-checked with the app they mount
  typescript: { strict: true, tsConfig: { include: ['../tests/app/**/*'] } },
  // separate build folders let two checkouts' builds and test servers run side by side
  ...(process.env.TERCET_BUILD_DIR ? { buildDir: process.env.TERCET_BUILD_DIR } : {}),
  hooks: {
    // API errors become problem+json first; Nuxt's own handler still renders page errors.
    'nitro:config'(config) {
      const existing = config.errorHandler ? [config.errorHandler].flat() : []
      config.errorHandler = [fileURLToPath(new URL('./server/error-handler.ts', import.meta.url)), ...existing]
    },
  },
})

import { fileURLToPath } from 'node:url'

const fontDir = fileURLToPath(new URL('./node_modules/@fontsource/roboto-mono/files', import.meta.url))
const interDir = fileURLToPath(new URL('./node_modules/@fontsource/inter/files', import.meta.url))

export default defineNuxtConfig({
  compatibilityDate: '2025-07-15',
  devtools: { enabled: false },
  telemetry: false,
  modules: ['@pinia/nuxt', '@nuxtjs/tailwindcss', 'nuxt-auth-utils', '@nuxt/eslint', 'nuxt-security'], // @nuxt/eslint only writes the lint config (eslint.config.mjs)
  // the charting library's sheet is served as a file (its inline <style> is off: chart-theme.ts), first in the cascade
  // as when the library put it at the top of <head>; the house look (charts.css) comes over it
  css: ['apexcharts/dist/apexcharts.css', '~/assets/css/main.css', '~/assets/css/charts.css'],
  // response headers and the page CSP (DEVELOPERS.md, "Security headers")
  security: {
    nonce: true,
    headers: {
      contentSecurityPolicy: {
        'default-src': ["'self'"],
        'script-src': ["'self'", "'nonce-{{nonce}}'"],
        'script-src-attr': ["'none'"],
        // <style> elements: the app's files and the nonced tags Nuxt renders
        'style-src': ["'self'", "'nonce-{{nonce}}'"],
        // style="" attributes: Vue renders bound styles as attributes and the charting library positions its SVG and
        // tooltips with them (setAttribute). Their values are computed at run time, so neither hashes nor nonces can
        // cover them; attribute CSS runs no script and can load nothing past img-src/font-src 'self'.
        'style-src-attr': ["'unsafe-inline'"],
        'img-src': ["'self'"],
        'font-src': ["'self'"],
        'connect-src': ["'self'"],
        'object-src': ["'none'"],
        'base-uri': ["'self'"],
        'form-action': ["'self'"],
        'frame-ancestors': ["'none'"],
        // served over plain HTTP on a plant network too; behind TLS every URL is relative, so nothing would upgrade
        'upgrade-insecure-requests': false,
      },
      xFrameOptions: 'DENY',
      xContentTypeOptions: 'nosniff',
      // other sites learn nothing (verification links carry their code in the path); the app's own pages keep it
      referrerPolicy: 'same-origin',
      // sent by server/plugins/security-headers.ts, and only on requests that came over HTTPS
      strictTransportSecurity: false,
    },
    // the app keeps its own limits in the database (request-limit.ts) and per-route body limits (64 MiB station
    // batches, streamed imports); these would count in process memory or refuse large batches with their own 413
    rateLimiter: false,
    requestSizeLimiter: false,
    // station posts are JSON validated by schemas and page text is escaped by Vue; this filter would refuse any
    // field holding "<" (a note, a search) with a bare 400
    xssValidator: false,
    // same-origin only: no cross-origin callers to answer
    corsHandler: false,
    allowedMethodsRestricter: false,
    // keep the app's console.warn/error in the client build
    removeLoggers: false,
  },
  // API answers (JSON, problem+json, CSV, PDF, event streams) are never documents to render: nothing may load or frame them
  routeRules: { '/api/**': { headers: { 'Content-Security-Policy': "default-src 'none'; frame-ancestors 'none'" } } },
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

// Blockbell application configuration. Root-level layout: pages/, components/, stores/ at the top.
import { fileURLToPath } from 'node:url'
import { SCRYPT_OPTIONS } from './server/database/scrypt-options'
import { themes } from './tailwind.config'
import { THEME_BOOT_SCRIPT } from './shared/theme/boot'

// Nuxt installs its own error handler only when none is set: list ours first, then Nuxt's.
const nuxtErrorHandler = fileURLToPath(new URL('./node_modules/@nuxt/nitro-server/dist/runtime/handlers/error.mjs', import.meta.url))

export default defineNuxtConfig({
  modules: ['@pinia/nuxt', '@nuxtjs/tailwindcss', 'nuxt-auth-utils', '@nuxt/eslint', 'nuxt-security'],
  devtools: { enabled: false },
  app: {
    head: {
      title: 'Blockbell',
      htmlAttrs: { lang: 'en' },
      meta: [
        { name: 'viewport', content: 'width=device-width, initial-scale=1' },
        { name: 'theme-color', content: themes.dark.surface },
        { name: 'mobile-web-app-capable', content: 'yes' },
        { name: 'apple-mobile-web-app-title', content: 'Blockbell' },
      ],
      link: [
        { rel: 'manifest', href: '/manifest.webmanifest' },
        { rel: 'icon', href: '/favicon.ico', sizes: '32x32' },
        { rel: 'icon', href: '/icon.svg', type: 'image/svg+xml' },
        { rel: 'apple-touch-icon', href: '/apple-touch-icon.png' },
      ],
      // the remembered theme before the first paint, so a light-theme tablet never flashes dark
      script: [{ innerHTML: THEME_BOOT_SCRIPT, tagPosition: 'head' }],
    },
  },
  css: ['@fontsource/barlow/400.css', '@fontsource/barlow/600.css', '@fontsource/barlow/700.css', '~/assets/css/main.css'],
  runtimeConfig: {
    session: { name: 'blockbell-session', maxAge: 60 * 60 * 12 },
  },
  dir: { app: 'app' },
  srcDir: '.',
  // Photo uploads check their own size (10 MB) and say so; other bodies keep nuxt-security's limits.
  routeRules: { '/api/uploads': { security: { requestSizeLimiter: false } } },
  compatibilityDate: '2025-07-15',
  nitro: {
    experimental: { websocket: true },
    // Uploaded photos (server/utils/uploads.ts); server/plugins/uploads-storage.ts can move them by configuration.
    storage: { uploads: { driver: 'fs', base: './.data/uploads' } },
    errorHandler: ['~/server/error-handler', nuxtErrorHandler],
  },
  typescript: { strict: true },
  telemetry: false,
  auth: { hash: { scrypt: SCRYPT_OPTIONS } },
  // Lint and format in one: @nuxt/eslint's stylistic rules (no Prettier).
  eslint: { config: { stylistic: { quotes: 'single', semi: false, commaDangle: 'always-multiline', braceStyle: '1tbs' } } },
  // Security headers (nuxt-security). The CSP admits only this server's scripts and Nuxt's own inline
  // scripts (each page carries a fresh nonce). Plain http stays usable on a layout room's network: no
  // upgrade-insecure-requests and no HSTS here (a reverse proxy serving https may add HSTS itself).
  security: {
    nonce: true,
    headers: {
      contentSecurityPolicy: {
        'default-src': ['\'self\''],
        'script-src': ['\'self\'', '\'strict-dynamic\'', '\'nonce-{{nonce}}\''],
        'script-src-attr': ['\'none\''],
        // Vue renders style="…" attributes (diagram positions) on the server.
        'style-src': ['\'self\'', '\'unsafe-inline\''],
        'img-src': ['\'self\'', 'data:'],
        'font-src': ['\'self\''],
        // The panels' WebSocket /live (ws: and wss: for browsers where 'self' does not cover them).
        'connect-src': ['\'self\'', 'ws:', 'wss:'],
        'object-src': ['\'none\''],
        'base-uri': ['\'none\''],
        'form-action': ['\'self\''],
        'frame-ancestors': ['\'none\''],
        'upgrade-insecure-requests': false,
      },
      xFrameOptions: 'DENY',
      xContentTypeOptions: 'nosniff',
      referrerPolicy: 'no-referrer',
      strictTransportSecurity: false,
    },
    // Blockbell throttles sign-ins itself; a global request limit would cut off busy panels.
    rateLimiter: false,
    // Request bodies are validated with zod and output is escaped by Vue; this filter refuses ordinary text.
    xssValidator: false,
    // No cross-origin API: no CORS headers at all.
    corsHandler: false,
    // Browser tests read the console: keep console calls in the client build.
    removeLoggers: false,
  },
})

// Blockbell application configuration. Root-level layout: pages/, components/, stores/ at the top.
import { SCRYPT_OPTIONS } from './server/database/scrypt-options'

export default defineNuxtConfig({
  compatibilityDate: '2025-07-15',
  srcDir: '.',
  dir: { app: 'app' },
  devtools: { enabled: false },
  telemetry: false,
  modules: ['@pinia/nuxt', '@nuxtjs/tailwindcss', 'nuxt-auth-utils', '@nuxt/eslint'],
  css: ['@fontsource/barlow/400.css', '@fontsource/barlow/600.css', '@fontsource/barlow/700.css', '~/assets/css/main.css'],
  app: {
    head: {
      title: 'Blockbell',
      htmlAttrs: { lang: 'en' },
      meta: [
        { name: 'viewport', content: 'width=device-width, initial-scale=1' },
        { name: 'theme-color', content: '#0f1720' },
      ],
    },
  },
  runtimeConfig: {
    session: { name: 'blockbell-session', maxAge: 60 * 60 * 12 },
  },
  auth: { hash: { scrypt: SCRYPT_OPTIONS } },
  nitro: { experimental: { websocket: true } },
  typescript: { strict: true },
  // Lint and format in one: @nuxt/eslint's stylistic rules (no Prettier).
  eslint: { config: { stylistic: { quotes: 'single', semi: false, commaDangle: 'always-multiline', braceStyle: '1tbs' } } },
})

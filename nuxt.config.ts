// Blockbell application configuration. Root-level layout: pages/, components/, stores/ at the top.
import { SCRYPT_OPTIONS } from './server/database/scrypt-options'
import { themes } from './tailwind.config'
import { THEME_BOOT_SCRIPT } from './shared/theme/boot'

export default defineNuxtConfig({
  modules: ['@pinia/nuxt', '@nuxtjs/tailwindcss', 'nuxt-auth-utils', '@nuxt/eslint'],
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
  compatibilityDate: '2025-07-15',
  nitro: { experimental: { websocket: true } },
  typescript: { strict: true },
  telemetry: false,
  auth: { hash: { scrypt: SCRYPT_OPTIONS } },
  // Lint and format in one: @nuxt/eslint's stylistic rules (no Prettier).
  eslint: { config: { stylistic: { quotes: 'single', semi: false, commaDangle: 'always-multiline', braceStyle: '1tbs' } } },
})

// Blockbell application configuration. Root-level layout: pages/, components/, stores/ at the top.
import { SCRYPT_OPTIONS } from './server/database/scrypt-options'
import { themes } from './tailwind.config'
import { THEME_BOOT_SCRIPT } from './shared/theme/boot'

export default defineNuxtConfig({
  compatibilityDate: '2025-07-15',
  srcDir: '.',
  dir: { app: 'app' },
  devtools: { enabled: false },
  telemetry: false,
  modules: ['@pinia/nuxt', '@nuxtjs/tailwindcss', 'nuxt-auth-utils'],
  css: ['@fontsource/barlow/400.css', '@fontsource/barlow/600.css', '@fontsource/barlow/700.css', '~/assets/css/main.css'],
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
  runtimeConfig: {
    session: { name: 'blockbell-session', maxAge: 60 * 60 * 12 },
  },
  auth: { hash: { scrypt: SCRYPT_OPTIONS } },
  nitro: { experimental: { websocket: true } },
  typescript: { strict: true },
})

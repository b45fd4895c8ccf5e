import { defineConfig } from 'vitest/config'
import { fileURLToPath } from 'node:url'
import { defineVitestProject } from '@nuxt/test-utils/config'

// `#shared/...` resolves as in the app (Nuxt sets it for the nuxt project; the plain projects need it here).
const sharedAlias = { '#shared': fileURLToPath(new URL('./shared', import.meta.url)) }

// Three tiers: plain unit tests, Nuxt-environment component tests, end-to-end tests against the built server.
// The browser tests (tests/browser) drive Debian's chromium through playwright-core and run in the e2e tier.
export default defineConfig({
  test: {
    projects: [
      { resolve: { alias: sharedAlias }, test: { name: 'unit', include: ['tests/unit/**/*.test.ts'], environment: 'node', testTimeout: 20_000 } },
      { resolve: { alias: sharedAlias }, test: { name: 'db', include: ['tests/db/**/*.test.ts'], environment: 'node', testTimeout: 30_000, hookTimeout: 60_000, fileParallelism: false } },
      {
        resolve: { alias: sharedAlias },
        test: {
          name: 'e2e',
          include: ['tests/e2e/**/*.test.ts', 'tests/browser/**/*.test.ts'],
          environment: 'node',
          testTimeout: 60_000,
          hookTimeout: 300_000,
          fileParallelism: false,
        },
      },
      await defineVitestProject({ test: { name: 'nuxt', include: ['tests/nuxt/**/*.test.ts'], environment: 'nuxt', testTimeout: 20_000 } }),
    ],
  },
})

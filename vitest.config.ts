import { defineConfig } from 'vitest/config'
import { defineVitestProject } from '@nuxt/test-utils/config'

// Three tiers: plain unit tests, Nuxt-environment component tests, end-to-end tests against the built server.
// The browser tests (tests/browser) drive Debian's chromium through playwright-core and run in the e2e tier.
export default defineConfig({
  test: {
    projects: [
      { test: { name: 'unit', include: ['tests/unit/**/*.test.ts'], environment: 'node' } },
      { test: { name: 'db', include: ['tests/db/**/*.test.ts'], environment: 'node', testTimeout: 30_000, hookTimeout: 60_000, fileParallelism: false } },
      {
        test: {
          name: 'e2e',
          include: ['tests/e2e/**/*.test.ts', 'tests/browser/**/*.test.ts'],
          environment: 'node',
          testTimeout: 60_000,
          hookTimeout: 300_000,
          fileParallelism: false,
        },
      },
      await defineVitestProject({ test: { name: 'nuxt', include: ['tests/nuxt/**/*.test.ts'], environment: 'nuxt' } }),
    ],
  },
})

// Lint and format for the whole tree: @nuxt/eslint's rules plus its stylistic set (nuxt.config.ts `eslint`).
import withNuxt from './.nuxt/eslint.config.mjs'

// Node 20 has no Object.groupBy (Node 21+), which eslint-flat-config-utils 3.2 (through @nuxt/eslint 1.17) calls
// when the configuration is resolved, after this module has run.
if (!Object.groupBy) {
  Object.groupBy = (items, key) => {
    const groups = Object.create(null)
    let i = 0
    for (const item of items) (groups[key(item, i++)] ??= []).push(item)
    return groups
  }
}

export default withNuxt(
  {
    ignores: ['.data/**', '.output/**', 'node_modules/**', 'tests/browser/screenshots/**', 'docs/**/*.json'],
  },
  {
    rules: {
      // one style for members of type literals: commas, as in `{ id: number, name: string }`
      '@stylistic/member-delimiter-style': ['error', {
        multiline: { delimiter: 'none' },
        singleline: { delimiter: 'comma', requireLast: false },
        multilineDetection: 'brackets',
      }],
      // one attribute per line once an element has more than three
      'vue/max-attributes-per-line': ['error', { singleline: 3, multiline: 1 }],
      // short elements stay on one line: <p class="bb-dim">Nothing yet.</p>
      'vue/singleline-html-element-content-newline': 'off',
      '@stylistic/max-statements-per-line': ['error', { max: 3 }],
      // deleting a key of a record (a map of ids) is what these objects are for
      '@typescript-eslint/no-dynamic-delete': 'off',
    },
  },
  {
    // tests read JSON replies and build broken layouts on purpose: loose types are the point there
    files: ['tests/**'],
    rules: { '@typescript-eslint/no-explicit-any': 'off' },
  },
)

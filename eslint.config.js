// ESLint flat config: TypeScript everywhere, Vue single-file components, and the core's purity rule (shared/ is pure
// TypeScript: no Vue, Express, ws, Drizzle, node:* or DOM) as lint rules. No formatting rules (the tree has no
// formatter); `npm run lint` fails on any warning.
import js from '@eslint/js'
import tseslint from 'typescript-eslint'
import vue from 'eslint-plugin-vue'

/** Browser globals shared/ must not touch (it also runs in Node and the command line). */
const DOM_GLOBALS = ['window', 'document', 'navigator', 'localStorage', 'sessionStorage', 'location', 'history', 'indexedDB', 'fetch', 'XMLHttpRequest', 'HTMLElement', 'Element', 'Node', 'Event', 'CustomEvent', 'alert', 'confirm', 'requestAnimationFrame', 'self', 'caches', 'Worker']

export default tseslint.config(
  { ignores: ['dist/**', 'node_modules/**', 'drizzle/**', 'public/**', 'coverage/**'] },
  js.configs.recommended,
  ...tseslint.configs.recommended,
  ...vue.configs['flat/essential'],
  {
    files: ['**/*.vue'],
    languageOptions: { parserOptions: { parser: tseslint.parser, extraFileExtensions: ['.vue'], sourceType: 'module' } },
  },
  {
    languageOptions: { ecmaVersion: 2022, sourceType: 'module' },
    rules: {
      // TypeScript checks these (and knows the DOM, Node and worker globals per file)
      'no-undef': 'off',
      '@typescript-eslint/no-unused-vars': ['error', { argsIgnorePattern: '^_', varsIgnorePattern: '^_', caughtErrors: 'none' }],
      // one-word names like Cell.vue, Sheet.vue are the product's words
      'vue/multi-word-component-names': 'off',
    },
  },
  {
    // A promise nobody awaits lets a test race its own setup (a role change still on its way to PostgreSQL while the
    // test goes on) and lets a server failure pass unseen. Work meant to run on its own says so with `void`.
    files: ['server/**/*.ts', 'tests/**/*.ts', 'bench/**/*.ts'],
    languageOptions: { parserOptions: { projectService: true, tsconfigRootDir: import.meta.dirname } },
    rules: { '@typescript-eslint/no-floating-promises': 'error' },
  },
  {
    files: ['shared/**/*.ts'],
    rules: {
      'no-restricted-imports': [
        'error',
        {
          paths: ['vue', 'vue-router', 'pinia', 'element-plus', 'express', 'ws', 'drizzle-orm', 'better-sqlite3'].map((name) => ({
            name,
            message: 'shared/ is pure TypeScript, used by the client, the server and the command line alike',
          })),
          patterns: [
            { group: ['node:*'], message: 'shared/ runs in the browser too: no Node built-ins' },
            { group: ['drizzle-orm/*', 'express/*', 'vue/*', '@vue/*'], message: 'shared/ is pure TypeScript' },
            { group: ['**/src/**', '**/server/**'], message: 'shared/ may not reach into the client or the server' },
          ],
        },
      ],
      'no-restricted-globals': ['error', ...DOM_GLOBALS.map((name) => ({ name, message: 'shared/ has no DOM: pass what it needs in' }))],
    },
  },
)

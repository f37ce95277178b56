// @ts-check
// Tercet's lint: the Nuxt module's flat config (nuxt prepare writes it into the build folder) plus the house rules
// of DEVELOPERS.md that a lint rule can see. Style (2 spaces, single quotes, no semicolons) is left to review: the
// module's stylistic rules are off, so lint never asks to reformat the tree.
import { resolve } from 'node:path'
import { pathToFileURL } from 'node:url'

const buildDir = resolve(import.meta.dirname, process.env.TERCET_BUILD_DIR || '.nuxt')
const { withNuxt } = await import(pathToFileURL(resolve(buildDir, 'eslint.config.mjs')).href)

const KNEX = ['knex', 'knex/*', 'mysql2', 'mysql2/*']
const knexBan = {
  group: KNEX,
  message: 'SQL lives in server/database/repositories; services pass the Knex (or transaction) on. Only they import knex.',
}
const serverFromApp = {
  regex: '^(?:~~/|#server|(?:\\.\\./)+)server(?:/|$)',
  message: 'app/ code never imports server/ code: read it through an API route and a composable.',
}
const appFromShared = {
  regex: '^(?:~/|~~/app(?:/|$)|@/|#app$|#app/|#imports$|#components$|(?:\\.\\./)+app(?:/|$))',
  message: 'shared/ is pure code both sides load: it imports neither app/ nor Nuxt\'s app runtime.',
}
const serverFromShared = {
  regex: '^(?:~~/server|#server|(?:\\.\\./)+server)(?:/|$)',
  message: 'shared/ is pure code both sides load: it never imports server/ code.',
}

// Services throw RuleError (server/services/rule-error.ts) and server/error-handler.ts alone turns it into
// problem+json; problem() and createError belong to routes and server utils.
const problemBan = {
  group: ['**/utils/problem', '~~/server/utils/problem'],
  importNames: ['problem', 'problemTitle'],
  message: 'Services throw RuleError (or RetryLater); the error handler turns it into problem+json.',
}
const h3ErrorBan = { name: 'h3', importNames: ['createError'], message: 'Services throw RuleError, not H3 errors.' }
const problemCalls = [
  { selector: 'CallExpression[callee.name="createError"]', message: 'Services throw RuleError; routes answer problem+json.' },
  { selector: 'CallExpression[callee.name="problem"]', message: 'Services throw RuleError; routes answer problem+json.' },
]
const fetchCall = (name) => ({
  selector: `CallExpression[callee.name="${name}"]`,
  message: 'Pages fetch through composables/<domain>/use….ts.',
})

export default withNuxt(
  {
    name: 'tercet/ignores',
    ignores: ['.data/**', 'tests/artifacts/**', 'coverage/**', 'public/**'],
  },
  {
    name: 'tercet/relaxed',
    rules: {
      // `any` marks library boundaries (table cells, caught errors, driver rows); strict TypeScript checks the rest
      '@typescript-eslint/no-explicit-any': 'off',
      // dropping empty query parameters by key is the idiom of the fetching composables
      '@typescript-eslint/no-dynamic-delete': 'off',
      // form components edit the fields of the reactive object a composable hands them; replacing a prop is refused
      'vue/no-mutating-props': ['error', { shallowOnly: true }],
      // L is the EWMA limit width (in sigmas), the symbol the control-chart literature uses
      'vue/prop-name-casing': ['error', 'camelCase', { ignoreProps: ['L'] }],
      'vue/attribute-hyphenation': ['warn', 'always', { ignore: ['L'] }],
    },
  },
  {
    name: 'tercet/no-console',
    files: ['app/**', 'server/**', 'shared/**'],
    // the server logs faults with console.warn/console.error (its only log); debug output stays out
    rules: { 'no-console': ['error', { allow: ['warn', 'error'] }] },
  },
  {
    name: 'tercet/pages',
    files: ['app/pages/**/*.vue'],
    rules: {
      // pages stay thin: split into components/<domain>/ before 150 lines
      'max-lines': ['error', { max: 150 }],
      'no-restricted-syntax': ['error', ...['useFetch', 'useLazyFetch', 'useAsyncData', 'useLazyAsyncData', '$fetch'].map(fetchCall)],
    },
  },
  {
    name: 'tercet/app-imports',
    files: ['app/**'],
    rules: { 'no-restricted-imports': ['error', { patterns: [serverFromApp, knexBan] }] },
  },
  {
    name: 'tercet/shared-imports',
    files: ['shared/**'],
    rules: { 'no-restricted-imports': ['error', { patterns: [appFromShared, serverFromShared, knexBan] }] },
  },
  {
    name: 'tercet/server-imports',
    files: ['server/**'],
    // server/utils/db.ts makes the one Knex instance; routes pass useDb() on and never build queries
    ignores: ['server/database/**', 'server/services/**', 'server/utils/db.ts'],
    rules: { 'no-restricted-imports': ['error', { patterns: [knexBan] }] },
  },
  {
    name: 'tercet/services',
    files: ['server/services/**'],
    rules: {
      'no-restricted-imports': ['error', { paths: [h3ErrorBan], patterns: [problemBan] }],
      'no-restricted-syntax': ['error', ...problemCalls],
    },
  },
)

// npm test: lint, then the same bring-up as npm start on a fresh tercet_test database, then the whole vitest suite.
import { resolve } from 'node:path'
import { spawnSync } from 'node:child_process'
import { existsSync, readFileSync, rmSync } from 'node:fs'
import { ensureNodeModules, ensureDebianPackage } from './lib/deps.mjs'
import { loadEnv, root, serverEnv } from './lib/env.mjs'
import { log } from './lib/run.mjs'

ensureNodeModules()
// the whole suite lints first (npm run lint) and stops on any lint error; a run of named files skips it, as it skips the type check
if (process.argv.length <= 2) {
  const lint = spawnSync(process.execPath, [resolve(root, 'scripts/lint.mjs')], { cwd: root, stdio: 'inherit' })
  if (lint.status !== 0) process.exit(lint.status ?? 1)
}
ensureDebianPackage('chromium', 'chromium')
const { prepareDatabase } = await import('./lib/database.mjs')
const { buildIfChanged } = await import('./lib/build.mjs')
const { startMailFakeIfNeeded } = await import('./lib/mail.mjs')

const env = loadEnv()
const testDb = env.TERCET_TEST_DB || 'tercet_test'
const tokenFile = resolve(root, `.data/${testDb}-station-tokens.json`)
const db = await prepareDatabase(env, testDb, { recreate: true, seed: true, tokenFile })
buildIfChanged()

// the whole suite also type-checks app/, server/ and shared/ (skipped for a run of named files, and when building elsewhere)
if (process.argv.length <= 2 && !process.env.TERCET_BUILD_DIR) {
  log('type-checking (nuxt typecheck)…')
  const tc = spawnSync(resolve(root, 'node_modules/.bin/nuxt'), ['typecheck'], { cwd: root, stdio: 'inherit' })
  if (tc.status !== 0) { process.stderr.write('\n[tercet] type errors: see above\n'); process.exit(tc.status ?? 1) }
}

// the local mail catcher (unless TERCET_SMTP_HOST names a relay), emptied for this run; it stops with this process
const mail = await startMailFakeIfNeeded(env, testDb, { fresh: true })
log('running the test suite…')
const report = resolve(root, `.data/${testDb}-vitest-report.json`)
rmSync(report, { force: true })
const r = spawnSync(resolve(root, 'node_modules/.bin/vitest'), ['run', '--reporter=default', '--reporter=json', `--outputFile.json=${report}`, ...process.argv.slice(2)], {
  cwd: root,
  stdio: 'inherit',
  // readers wait for a fold of their lot in progress as long as a busy CI machine may take, so figures read right
  // after posting are complete; the integration tests of the lease set their own wait
  env: {
    ...serverEnv(env, db), ...mail.env, TERCET_MAIL_BACKOFF_MS: env.TERCET_MAIL_BACKOFF_MS || '1000', TERCET_TEST_TOKENS: tokenFile, NODE_ENV: 'test',
    TERCET_READER_FOLD_WAIT_MS: env.TERCET_READER_FOLD_WAIT_MS || '5000',
  },
})
if (existsSync(report)) {
  const j = JSON.parse(readFileSync(report, 'utf8'))
  process.stdout.write(`\ntests: ${j.numPassedTests} passed, ${j.numFailedTests} failed\n`)
}
mail.stop()
process.exit(r.status ?? 1)

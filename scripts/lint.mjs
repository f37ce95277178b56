// npm run lint: ESLint over the tree with the project's rules (eslint.config.mjs). The Nuxt part of the config is
// written by `nuxt prepare` into the build folder; it is prepared here when missing. Extra arguments go to eslint
// (`npm run lint -- --fix`, `npm run lint -- app/pages`). Exits non-zero on any error.
import { existsSync } from 'node:fs'
import { resolve } from 'node:path'
import { spawnSync } from 'node:child_process'
import { ensureNodeModules } from './lib/deps.mjs'
import { root } from './lib/env.mjs'
import { log, runOrFail } from './lib/run.mjs'

ensureNodeModules()
const buildDir = resolve(root, process.env.TERCET_BUILD_DIR || '.nuxt')
if (!existsSync(resolve(buildDir, 'eslint.config.mjs'))) {
  log('preparing the Nuxt lint config (nuxt prepare)…')
  runOrFail(resolve(root, 'node_modules/.bin/nuxt'), ['prepare'], { cwd: root })
}
const args = process.argv.slice(2)
log('linting (eslint)…')
// the cache keeps repeated runs to the files that changed (by content, so a checkout or rebase does not defeat it)
const r = spawnSync(resolve(root, 'node_modules/.bin/eslint'), [
  '--cache', '--cache-strategy', 'content', '--cache-location', resolve(root, 'node_modules/.cache/eslint/'),
  ...(args.length ? args : ['.']),
], { cwd: root, stdio: 'inherit' })
if (r.status !== 0) process.stderr.write('\n[tercet] lint errors: see above (npm run lint -- --fix mends some)\n')
process.exit(r.status ?? 1)

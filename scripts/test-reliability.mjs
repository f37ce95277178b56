// npm run test:reliability: the fault tests (tests/reliability/faults/, vitest project `faults`), each with its own
// MariaDB on TERCET_FAULTS_DB_PORT (default 3382, data in .data/faults-mariadb) and its own server, never the
// database npm start and npm test use; then a 2.5-minute soak (scripts/soak.ts --ci). Builds first when sources
// changed, and prints how long each part took.
// `npm run test:reliability -- tests/reliability/faults/app-kill.test.ts` runs only the named files (and no soak).
import { resolve } from 'node:path'
import { spawnSync } from 'node:child_process'
import { ensureNodeModules } from './lib/deps.mjs'
import { loadEnv, root } from './lib/env.mjs'
import { log } from './lib/run.mjs'

const parts = []
const timed = (name, work) => {
  const t0 = performance.now()
  const status = work()
  parts.push({ part: name, seconds: Math.round((performance.now() - t0) / 100) / 10, ok: status === 0 })
  return status
}

ensureNodeModules()
const { buildIfChanged } = await import('./lib/build.mjs')
timed('build', () => { buildIfChanged(); return 0 })

const env = { ...loadEnv(), TERCET_FAULTS: '1', NODE_ENV: 'test' }
log('running the fault tests (vitest project faults)…')
timed('faults', () => spawnSync(resolve(root, 'node_modules/.bin/vitest'), ['run', '--project', 'faults', ...process.argv.slice(2)], {
  cwd: root, stdio: 'inherit', env,
}).status ?? 1)

// the soak fails only on correctness (a lost or duplicated run, a 5xx other than 503, the server exiting, RSS beyond
// a generous bound), never on its speed figures; it has its own database (tercet_soak) on the project's MariaDB,
// as the benchmarks do
if (process.argv.length <= 2) {
  log('running the soak (npm run soak -- --minutes 2.5 --ci)…')
  timed('soak', () => spawnSync(resolve(root, 'node_modules/.bin/jiti'), [resolve(root, 'scripts/soak.ts'), '--minutes', '2.5', '--ci', '--no-build'], {
    cwd: root, stdio: 'inherit', env: loadEnv(),
  }).status ?? 1)
}

for (const p of parts) process.stdout.write(`${JSON.stringify({ reliability: p.part, seconds: p.seconds, ok: p.ok })}\n`)
process.exit(parts.every((p) => p.ok) ? 0 : 1)

// npm run test:cluster: the cluster tests (tests/cluster/, vitest project `cluster`) on a three-node Galera cluster
// of their own (data in .data/cluster-test, ports from TERCET_CLUSTER_TEST_PORT_BASE, default 3450) with two app
// instances behind HAProxy; never the database npm start and npm test use. Builds first when sources changed.
// `npm run test:cluster -- tests/cluster/x.test.ts` runs only the named files.
import { resolve } from 'node:path'
import { spawnSync } from 'node:child_process'
import { ensureNodeModules } from './lib/deps.mjs'
import { loadEnv, root } from './lib/env.mjs'
import { log } from './lib/run.mjs'

ensureNodeModules()
const { ensureClusterPackages } = await import('./lib/cluster.mjs')
ensureClusterPackages()
const { buildIfChanged } = await import('./lib/build.mjs')
buildIfChanged()

const t0 = performance.now()
log('running the cluster tests (vitest project cluster)…')
const status = spawnSync(resolve(root, 'node_modules/.bin/vitest'), ['run', '--project', 'cluster', ...process.argv.slice(2)], {
  cwd: root, stdio: 'inherit', env: { ...loadEnv(), TERCET_CLUSTER_TESTS: '1', NODE_ENV: 'test' },
}).status ?? 1
process.stdout.write(`${JSON.stringify({ cluster: 'tests', seconds: Math.round((performance.now() - t0) / 100) / 10, ok: status === 0 })}\n`)
process.exit(status)

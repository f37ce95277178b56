// npm run cluster:up | cluster:down | cluster:status — the three-node Galera cluster and HAProxy on loopback
// (scripts/lib/cluster.mjs). Ports from TERCET_CLUSTER_PORT_BASE (default 3400: HAProxy's SQL address).
import { galeraCluster } from './lib/cluster.mjs'
import { fail } from './lib/run.mjs'

const cluster = galeraCluster()
const verb = process.argv[2]
if (verb === 'up') await cluster.up()
else if (verb === 'down') await cluster.down()
else if (verb === 'status') for (const s of cluster.status()) process.stdout.write(`${JSON.stringify(s)}\n`)
else fail('usage: node scripts/cluster.mjs up|down|status')

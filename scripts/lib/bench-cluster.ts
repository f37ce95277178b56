// The ingest benchmark's cluster stages (npm run bench:ingest -- --cluster): the same single-run and batch posts,
// through HAProxy to two instances of the built server over a three-node Galera cluster of the bench's own (data in
// .data/cluster-bench, ports from TERCET_CLUSTER_BENCH_PORT_BASE, default 3480). On one two-core machine all of it
// shares the same cores, so the figures measure the cluster's overhead per run, not its capacity.
import type { ChildProcess } from 'node:child_process'
import { openSync } from 'node:fs'
import { resolve } from 'node:path'
import type { Knex } from 'knex'
import { dataDir, dbSettings, loadEnv, serverEnv } from './env.mjs'
import { galeraCluster } from './cluster.mjs'
import { startInstance } from './cluster-apps.mjs'
import { batchTally, cannon } from './bench-cannon'
import { HOST, cpuTimes, freePort, prepareBenchDatabase, stopChild } from './bench-server'
import { createKnex } from '../../server/database/connection'
import { foldPendingStats } from '../../server/services/ingest/fold-param-stats'

const say = (m: string) => process.stderr.write(`[bench] ${m}\n`)
const round = (x: number, d = 1) => Math.round(x * 10 ** d) / 10 ** d
const cpu = (pid: number | null) => { if (!pid) return Number.NaN; const t = cpuTimes(pid); return t.user + t.system }

export type SingleNode = { runsPerSec: number; batchPerSec: number }
export type ClusterBench = {
  database: string; seconds: number; connections: number; batch: number; rounds: number
  singleBodies: Buffer[]; batchBodies: Buffer[]
  /** makes the bench's stations and tokens in a fresh database (the same rows as on the single node) */
  stations: (knex: Knex) => Promise<string[]>
}

export async function clusterStages(o: ClusterBench, single: SingleNode): Promise<void> {
  const base = resolve(dataDir, 'cluster-bench')
  const portBase = Number(process.env.TERCET_CLUSTER_BENCH_PORT_BASE || 3480)
  process.env.TERCET_BENCH_CLUSTER_BASE = base
  process.env.TERCET_BENCH_CLUSTER_PORT_BASE = String(portBase)
  const cluster = galeraCluster({ base, portBase, fail: (m: string) => { throw new Error(m) } })
  say('bringing up the bench cluster and a fresh bench database on it…')
  prepareBenchDatabase(o.database, true)
  const env = { ...loadEnv(), TERCET_DB_PORT: String(cluster.sqlPort) }
  const settings = dbSettings(env, o.database)
  const knex = createKnex({ host: HOST, port: settings.port, user: settings.user, password: settings.password, database: o.database }, { min: 0, max: 8 })
  const children: ChildProcess[] = []
  try {
    const tokens = await o.stations(knex)
    const log = openSync(resolve(dataDir, 'bench-ingest-cluster.log'), 'w')
    const ports = [await freePort(), await freePort()]
    for (const p of ports) children.push(await startInstance({ ...serverEnv(env, settings), NUXT_SESSION_PASSWORD: env.NUXT_SESSION_PASSWORD }, p, { stdio: ['ignore', log, log] }))
    const httpPort = await freePort()
    cluster.startHaproxy({ http: { port: httpPort, backends: ports } })
    await new Promise((r) => setTimeout(r, 1500))

    const pids = () => ({ nodes: cluster.nodes.map((n: any) => cluster.pidOf(n)), apps: children.map((c) => c.pid!) })
    const sample = () => { const p = pids(); return { nodes: p.nodes.map(cpu), apps: p.apps.map(cpu).reduce((a: number, b: number) => a + b, 0) } }
    const perRun = (a: ReturnType<typeof sample>, b: ReturnType<typeof sample>, runs: number) => ({
      ...Object.fromEntries(a.nodes.map((x: number, k: number) => [`node${k + 1}`, round((1000 * (b.nodes[k]! - x)) / runs, 2)])),
      instances: round((1000 * (b.apps - a.apps)) / runs, 2),
    })
    const drain = async () => { const t0 = performance.now(); await foldPendingStats(knex); return (performance.now() - t0) / 1000 }

    say('cluster: warming up for 3 s…')
    const warm = await cannon(httpPort, '/api/v1/runs', o.singleBodies, tokens, { seconds: 3 }, undefined, o.connections)
    await drain()
    say(`cluster: POST /api/v1/runs through HAProxy, ${o.connections} connections for ${o.seconds} s…`)
    const c0 = sample()
    const s = await cannon(httpPort, '/api/v1/runs', o.singleBodies.slice(warm.used), tokens, { seconds: o.seconds }, undefined, o.connections)
    const sDrain = await drain()
    const c1 = sample()
    const runsPerSec = s['2xx'] / (s.duration + sDrain)
    process.stdout.write(JSON.stringify({
      endpoint: 'runs', topology: 'cluster', runsPerSec: round(runsPerSec), p50Ms: s.latency.p50, p99Ms: s.latency.p99, errors: s.errors + s.timeouts,
      non2xx: s.non2xx, singleNodeRunsPerSec: round(single.runsPerSec), ratio: round(runsPerSec / single.runsPerSec, 3), cpuPerRunMs: perRun(c0, c1, Math.max(1, s['2xx'])),
    }) + '\n')

    say(`cluster: POST /api/v1/runs/batch, ${o.batch} runs per request…`)
    const tally = batchTally()
    const b0 = sample()
    const b = await cannon(httpPort, '/api/v1/runs/batch', o.batchBodies, tokens, { amount: o.rounds * o.connections }, tally.onBody, o.connections)
    const { stored, refused } = tally
    const bDrain = await drain()
    const b1 = sample()
    const batchPerSec = stored / (b.duration + bDrain)
    process.stdout.write(JSON.stringify({
      endpoint: 'runs/batch', topology: 'cluster', runsPerSec: round(batchPerSec), p50Ms: b.latency.p50, p99Ms: b.latency.p99, errors: b.errors + b.timeouts,
      non2xx: b.non2xx + refused, singleNodeRunsPerSec: round(single.batchPerSec), ratio: round(batchPerSec / single.batchPerSec, 3), cpuPerRunMs: perRun(b0, b1, Math.max(1, stored)),
    }) + '\n')
  } finally {
    for (const c of children) await stopChild(c)
    await knex.destroy()
    cluster.stopHaproxy()
    await cluster.down()
  }
}

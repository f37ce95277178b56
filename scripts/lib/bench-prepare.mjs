// Build (when sources changed) and a fresh, seeded bench database, run as a child so that the
// bench's own stdout carries nothing but its result lines. With TERCET_BENCH_CLUSTER_BASE (a folder) and
// TERCET_BENCH_CLUSTER_PORT_BASE, the database is made on a Galera cluster of its own there (scripts/lib/cluster.mjs).
import { resolve } from 'node:path'
import { loadEnv, root } from './env.mjs'
import { buildIfChanged } from './build.mjs'
import { prepareDatabase } from './database.mjs'
import { galeraCluster } from './cluster.mjs'

const [database, mode] = process.argv.slice(2)
if (!database) throw new Error('usage: bench-prepare.mjs <database> [--no-build]')
if (mode !== '--no-build') buildIfChanged()
const env = loadEnv()
const clusterBase = process.env.TERCET_BENCH_CLUSTER_BASE
const cluster = clusterBase ? galeraCluster({ base: clusterBase, portBase: Number(process.env.TERCET_BENCH_CLUSTER_PORT_BASE) }) : undefined
if (cluster) env.TERCET_DB_PORT = String(cluster.sqlPort)
await prepareDatabase(env, database, { recreate: true, seed: true, server: cluster, tokenFile: resolve(root, `.data/${database}-station-tokens.json`) })

// The cluster tests' own topology on loopback: a three-node Galera cluster (data under .data/cluster-test, ports from
// TERCET_CLUSTER_TEST_PORT_BASE, default 3450), a fresh database migrated and seeded through HAProxy, two instances of
// the built server and HAProxy's HTTP address over them; and the means to kill and restart a node or an instance.
import type { ChildProcess } from 'node:child_process'
import { resolve } from 'node:path'
import type { Knex } from 'knex'
// @ts-expect-error plain ES module without types
import { dataDir } from '../../scripts/lib/env.mjs'
// @ts-expect-error plain ES module without types
import { galeraCluster } from '../../scripts/lib/cluster.mjs'
// @ts-expect-error plain ES module without types
import { startInstance } from '../../scripts/lib/cluster-apps.mjs'
import { freePort, killAndWait, rigDatabase, rigMail, sleep } from '../reliability/faults/rig'

export { sleep }

export type Instance = { url: string; port: number; err: string[]; kill: () => Promise<void>; start: () => Promise<void> }

export type ClusterRig = {
  /** HAProxy's HTTP address over both instances */
  url: string
  instances: Instance[]
  /** a pool through HAProxy's SQL address, as the app's */
  db: Knex
  tokens: Record<string, string>
  cluster: any
  database: string
  /** the instances' environment (database through HAProxy, mail catcher) */
  appEnv: Record<string, string>
  /** one node's own answer to a statement (its socket), for comparing the nodes */
  onNode: (i: number, sql: string) => string
  close: () => Promise<void>
}

const PORT_BASE = Number(process.env.TERCET_CLUSTER_TEST_PORT_BASE || 3450)
const DATABASE = 'tercet_cluster'

export async function startClusterRig(): Promise<ClusterRig> {
  const cluster = galeraCluster({ base: resolve(dataDir, 'cluster-test'), portBase: PORT_BASE, fail: (m: string) => { throw new Error(m) } })
  const { sEnv, db, tokens } = await rigDatabase(cluster, cluster.sqlPort, DATABASE, 'cluster')
  const { mail, mailEnv } = await rigMail('cluster')

  const instances: Instance[] = []
  for (let k = 0; k < 2; k++) {
    const port = await freePort()
    const err: string[] = []
    let child: ChildProcess | undefined
    const inst: Instance = {
      url: `http://127.0.0.1:${port}`, port, err,
      async start() {
        child = await startInstance({ ...sEnv, ...mailEnv }, port, { stdio: ['ignore', 'ignore', 'pipe'] })
        child!.stderr!.on('data', (b: Buffer) => err.push(...b.toString('utf8').split('\n').filter(Boolean)))
      },
      kill: () => killAndWait(child),
    }
    await inst.start()
    instances.push(inst)
  }
  const httpPort = await freePort()
  cluster.startHaproxy({ http: { port: httpPort, backends: instances.map((i) => i.port) } })
  const url = `http://127.0.0.1:${httpPort}`
  for (let t = 0; t < 50; t++) { try { if ((await fetch(`${url}/api/health`)).ok) break } catch { /* HAProxy starting */ } await sleep(200) }

  return {
    url, instances, db, tokens, cluster, database: DATABASE, appEnv: { ...sEnv, ...mailEnv },
    onNode: (i, sql) => cluster.sqlOn(cluster.node(i), sql),
    async close() {
      for (const i of instances) await i.kill()
      await db.destroy().catch(() => {})
      await mail.close()
      await cluster.down()
    },
  }
}

/** The checksums of the given tables on each node, as each node holds them. */
export function nodeChecksums(rig: ClusterRig, tables: string[]): string[] {
  return [1, 2, 3].map((i) => rig.onNode(i, `CHECKSUM TABLE ${tables.map((t) => `${rig.database}.${t}`).join(', ')} EXTENDED`).trim())
}

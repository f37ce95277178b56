// A three-node MariaDB Galera cluster on loopback (Debian's mariadb-server with the galera-4 provider), each node with
// its own data folder under .data/cluster/, and HAProxy in front: one SQL address that sends every connection to one
// synced node at a time and moves to another when it fails, and optionally one HTTP address over several app instances.
import { existsSync, mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs'
import { resolve } from 'node:path'
import { spawn, spawnSync } from 'node:child_process'
import { dataDir, root } from './env.mjs'
import { ensureDebianFile, ensureDebianPackage } from './deps.mjs'
import { log, fail as failAndExit } from './run.mjs'
import { commitSetting, databaseStatements } from './mariadb.mjs'

const PROVIDER = '/usr/lib/galera/libgalera_smm.so'
export const NODES = 3
// a user with no privileges, for HAProxy's readiness check (SHOW STATUS needs none); loopback only
const PROBE_USER = 'tercet_probe'

const sleep = (ms) => new Promise((r) => setTimeout(r, ms))
const alive = (pid) => { try { process.kill(pid, 0); return true } catch { return false } }

/** Installs what the cluster needs from Debian when it is missing. */
export function ensureClusterPackages() {
  ensureDebianPackage('mariadbd', 'mariadb-server')
  ensureDebianFile(PROVIDER, 'galera-4')
  ensureDebianPackage('haproxy', 'haproxy')
  ensureDebianPackage('rsync', 'rsync')
  ensureDebianPackage('mariadb-backup', 'mariadb-backup')
}

/**
 * Ports from `portBase` (default TERCET_CLUSTER_PORT_BASE or 3400): HAProxy's SQL address at portBase, node i's SQL
 * at portBase + i, its Galera traffic at + 10 + i, incremental state transfer at + 20 + i, full state transfer at
 * + 30 + i. `fail` reports a problem (scripts print and exit; tests pass one that throws).
 */
export function galeraCluster({ base = resolve(dataDir, 'cluster'), portBase = Number(process.env.TERCET_CLUSTER_PORT_BASE || 3400), fail = failAndExit } = {}) {
  const nodes = Array.from({ length: NODES }, (_, k) => {
    const i = k + 1
    const dir = resolve(base, `node${i}`)
    return {
      i, dir, datadir: resolve(dir, 'data'), socket: resolve(dir, 'mysqld.sock'), pidFile: resolve(dir, 'mysqld.pid'),
      errLog: resolve(dir, 'mysqld.err'), tmpDir: resolve(dir, 'tmp'), cnf: resolve(dir, 'node.cnf'),
      port: portBase + i, galeraPort: portBase + 10 + i, istPort: portBase + 20 + i, sstPort: portBase + 30 + i,
    }
  })
  const sqlPort = portBase
  const haproxyDir = resolve(base, 'haproxy')
  const haproxyPid = resolve(haproxyDir, 'haproxy.pid')
  const members = nodes.map((n) => `127.0.0.1:${n.galeraPort}`).join(',')

  const node = (i) => nodes[i - 1]
  function pidOf(n) {
    if (!existsSync(n.pidFile)) return null
    const p = Number(readFileSync(n.pidFile, 'utf8').trim())
    return Number.isInteger(p) && p > 0 && alive(p) ? p : null
  }

  function sqlOn(n, statement, { quiet = false } = {}) {
    const r = spawnSync('mariadb', ['--no-defaults', `--socket=${n.socket}`, '-uroot', '-N', '-B', '-e', statement], { encoding: 'utf8' })
    if (r.status !== 0) { if (quiet) return null; fail(`MariaDB statement on node ${n.i} failed: ${r.stderr}`) }
    return r.stdout
  }

  /** What a node says of itself, or null when it does not answer. */
  function nodeStatus(n) {
    const out = sqlOn(n, `SELECT VARIABLE_NAME, VARIABLE_VALUE FROM information_schema.GLOBAL_STATUS WHERE VARIABLE_NAME IN
      ('wsrep_cluster_size', 'wsrep_cluster_status', 'wsrep_local_state', 'wsrep_local_state_comment', 'wsrep_ready', 'wsrep_last_committed', 'wsrep_connected')`, { quiet: true })
    if (out === null) return null
    const v = Object.fromEntries(out.trim().split('\n').map((l) => l.split('\t')).map(([k, x]) => [k.toLowerCase(), x]))
    return {
      node: n.i, port: n.port, pid: pidOf(n), clusterSize: Number(v.wsrep_cluster_size), component: v.wsrep_cluster_status,
      state: v.wsrep_local_state_comment, synced: v.wsrep_local_state === '4' && v.wsrep_ready === 'ON', lastCommitted: Number(v.wsrep_last_committed),
    }
  }

  function grastate(n) {
    const f = resolve(n.datadir, 'grastate.dat')
    if (!existsSync(f)) return null
    const t = readFileSync(f, 'utf8')
    return { file: f, text: t, uuid: t.match(/uuid:\s*(\S+)/)?.[1], seqno: Number(t.match(/seqno:\s*(-?\d+)/)?.[1] ?? -1), safe: /safe_to_bootstrap:\s*1/.test(t) }
  }

  /** The node's options, kept in its own option file: the state-transfer scripts and mariadb-backup read them there. */
  const nodeOptions = (n) => {
    const c = commitSetting()
    return ['--user=root', `--datadir=${n.datadir}`, '--bind-address=127.0.0.1', `--port=${n.port}`, `--socket=${n.socket}`,
      `--pid-file=${n.pidFile}`, `--log-error=${n.errLog}`, `--tmpdir=${n.tmpDir}`, '--skip-name-resolve', `--server-id=${n.i}`,
      '--innodb-buffer-pool-size=256M', `--innodb-flush-log-at-trx-commit=${c.flushLog}`, '--max-connections=300',
      '--thread-handling=pool-of-threads', '--thread-pool-stall-limit=20',
      '--character-set-server=utf8mb4', '--collation-server=utf8mb4_unicode_ci',
      // what Galera requires: row events, InnoDB, interleaved auto-increment locking
      '--binlog-format=ROW', '--default-storage-engine=InnoDB', '--innodb-autoinc-lock-mode=2',
      '--wsrep-on=ON', `--wsrep-provider=${PROVIDER}`, '--wsrep-cluster-name=tercet', `--wsrep-cluster-address=gcomm://${members}`,
      `--wsrep-node-name=node${n.i}`, `--wsrep-node-address=127.0.0.1:${n.galeraPort}`,
      // a node that was down a few minutes catches up from a peer's write-set cache (incremental transfer) instead of
      // copying the whole data folder; the cache holds that much of recent writes
      `--wsrep-provider-options=gmcast.listen_addr=tcp://127.0.0.1:${n.galeraPort};ist.recv_addr=127.0.0.1:${n.istPort};gcache.size=512M;pc.recovery=TRUE`,
      // state transfer by mariadb-backup (root signs in by its socket, so no password is kept)
      '--wsrep-sst-method=mariabackup', '--wsrep-sst-auth=root:', `--wsrep-sst-receive-address=127.0.0.1:${n.sstPort}`, '--wsrep-slave-threads=2']
  }

  /**
   * Only this file is read (never the machine's own MariaDB settings); the state-transfer scripts log beside the node
   * rather than to the system log.
   */
  function writeNodeOptions(n) {
    mkdirSync(n.tmpDir, { recursive: true })
    const lines = nodeOptions(n).map((a) => a.replace(/^--/, '').replace(/^([^=]+)=(.*;.*)$/, '$1="$2"'))
    writeFileSync(n.cnf, ['[mysqld]', ...lines, '', '[sst]', 'sst-syslog=-1', `sst-log-archive-dir=${resolve(n.dir, 'sst-logs')}`, ''].join('\n'))
  }

  /** The position a node stopped at without a clean shutdown, read from its InnoDB log (mariadbd --wsrep-recover). */
  function recoverPosition(n) {
    const recoverLog = resolve(n.dir, 'recover.err')
    rmSync(recoverLog, { force: true })
    writeNodeOptions(n)
    spawnSync('mariadbd', [`--defaults-file=${n.cnf}`, `--log-error=${recoverLog}`, '--wsrep-recover'], { stdio: 'ignore' })
    const text = existsSync(recoverLog) ? readFileSync(recoverLog, 'utf8') : ''
    return text.match(/Recovered position:\s*(\S+:-?\d+)/)?.[1] ?? null
  }

  /** Starts one node: as the first of a new cluster (`bootstrap`) or joining the running ones. */
  async function startNode(i, { bootstrap = false } = {}) {
    const n = node(i)
    if (pidOf(n) && nodeStatus(n)) return
    mkdirSync(n.tmpDir, { recursive: true })
    writeNodeOptions(n)
    if (!existsSync(resolve(n.datadir, 'mysql'))) {
      const init = spawnSync('mariadb-install-db', ['--no-defaults', '--user=root', `--datadir=${n.datadir}`,
        '--auth-root-authentication-method=socket', '--skip-test-db'], { stdio: ['ignore', 'ignore', 'inherit'] })
      if (init.status !== 0) return fail(`command failed (${init.status ?? init.signal}): mariadb-install-db (node ${i})`)
    }
    const args = [`--defaults-file=${n.cnf}`]
    const g = grastate(n)
    // after a kill the saved position is unknown (-1): read it back from the log, so the node asks its peers for only
    // what it missed
    if (g && g.seqno === -1) { const pos = recoverPosition(n); if (pos) args.push(`--wsrep-start-position=${pos}`) }
    if (bootstrap) {
      if (g && !g.safe) writeFileSync(g.file, g.text.replace(/safe_to_bootstrap:\s*0/, 'safe_to_bootstrap: 1'))
      args.push('--wsrep-new-cluster')
    }
    const child = spawn('mariadbd', args, { detached: true, stdio: 'ignore' })
    child.unref()
    // a joiner waits for its state transfer; a full one on a loaded two-core machine takes a while
    for (let t = 0; t < 1200; t++) {
      const s = nodeStatus(n)
      if (s?.synced && s.component === 'Primary') return
      // (its pid file appears only after the state transfer)
      if (!alive(child.pid)) break
      await sleep(250)
    }
    const tail = existsSync(n.errLog) ? readFileSync(n.errLog, 'utf8').split('\n').slice(-20).join('\n') : ''
    return fail(`node ${i} did not become a synced member within 5 minutes. Last lines of its log:\n${tail}`)
  }

  /** The node to start a new cluster from: the one marked safe, else the one that committed most. */
  function bootstrapNode() {
    const states = nodes.map((n) => ({ n, g: grastate(n) }))
    const safe = states.find((s) => s.g?.safe)
    if (safe) return safe.n.i
    if (states.every((s) => !s.g)) return 1
    let best = { i: 1, seqno: -Infinity }
    for (const { n, g } of states) {
      let seqno = g?.seqno ?? -1
      if (g && seqno === -1) { const pos = recoverPosition(n); seqno = pos ? Number(pos.split(':').pop()) : -1 }
      if (seqno > best.seqno) best = { i: n.i, seqno }
    }
    return best.i
  }

  /** Every node up and synced in one primary component, and HAProxy's SQL address in front of them. */
  async function up({ http } = {}) {
    ensureClusterPackages()
    const running = nodes.filter((n) => nodeStatus(n)?.component === 'Primary')
    const first = running.length ? running[0].i : bootstrapNode()
    if (!running.length) { log(`bootstrapping the cluster from node ${first} (127.0.0.1:${node(first).port})…`); await startNode(first, { bootstrap: true }) }
    for (const n of nodes) {
      if (n.i === first && !running.length) continue
      if (nodeStatus(n)?.synced) continue
      log(`joining node ${n.i} (127.0.0.1:${n.port})…`)
      await startNode(n.i)
    }
    const s = nodeStatus(node(first))
    if (s?.clusterSize !== NODES) return fail(`the cluster has ${s?.clusterSize} members, not ${NODES}`)
    sqlOn(node(first), `CREATE USER IF NOT EXISTS '${PROBE_USER}'@'127.0.0.1'; FLUSH PRIVILEGES;`)
    startHaproxy({ http })
    log(`cluster of ${NODES} synced; SQL through HAProxy at 127.0.0.1:${sqlPort}`)
  }

  function haproxyConfig({ http } = {}) {
    const check = resolve(root, 'scripts/cluster/node-ready.sh')
    const errors = resolve(root, 'scripts/cluster/unavailable.http')
    const lines = [
      'global',
      '  maxconn 4000',
      // the node check runs a tiny script (mariadb client) that asks the node whether it is synced
      '  external-check',
      '  insecure-fork-wanted',
      `  pidfile ${haproxyPid}`,
      'defaults',
      '  timeout connect 2s',
      '  timeout client 1h',
      '  timeout server 1h',
      '  timeout check 6s',
      '',
      'listen mariadb',
      `  bind 127.0.0.1:${sqlPort}`,
      '  mode tcp',
      '  option external-check',
      `  external-check command ${check}`,
      '  external-check path "/usr/bin:/bin"',
      // every connection goes to the same node (no certification conflicts between our own writes); when it fails,
      // to the next, and stays there after the first comes back
      '  stick-table type integer size 1',
      '  stick on int(1)',
      // a killed node refuses at once and is out within about 3 s; a node merely slow to answer its check under load is
      // given three chances of up to 6 s before its connections are cut
      '  default-server inter 1s fall 3 rise 2 on-marked-down shutdown-sessions',
      ...nodes.map((n) => `  server node${n.i} 127.0.0.1:${n.port} check${n.i === 1 ? '' : ' backup'}`),
    ]
    if (http) {
      lines.push('',
        'listen tercet',
        `  bind ${http.host ?? '127.0.0.1'}:${http.port}`,
        '  mode http',
        '  balance roundrobin',
        '  option httpchk GET /api/health',
        '  option forwardfor',
        // a request whose instance died before answering goes to another one (run ids make a repeated post harmless)
        '  option http-buffer-request',
        '  retries 3',
        '  option redispatch 1',
        '  retry-on conn-failure empty-response response-timeout',
        '  timeout tunnel 1h',
        '  default-server inter 1s fall 2 rise 2',
        // a station told 502/503/504 by the balancer gets Tercet's own 503 with Retry-After instead
        `  errorfile 502 ${errors}`,
        `  errorfile 503 ${errors}`,
        `  errorfile 504 ${errors}`,
        ...http.backends.map((b, k) => `  server app${k + 1} 127.0.0.1:${b} check`))
    }
    return lines.join('\n') + '\n'
  }

  function haproxyRunningPid() {
    if (!existsSync(haproxyPid)) return null
    const p = Number(readFileSync(haproxyPid, 'utf8').trim().split('\n')[0])
    return Number.isInteger(p) && p > 0 && alive(p) ? p : null
  }

  function startHaproxy({ http } = {}) {
    mkdirSync(haproxyDir, { recursive: true })
    const cfg = resolve(haproxyDir, 'haproxy.cfg')
    writeFileSync(cfg, haproxyConfig({ http }))
    const old = haproxyRunningPid()
    // a running HAProxy takes the new configuration and hands its listening sockets over (-sf)
    const r = spawnSync('haproxy', ['-f', cfg, '-D', ...(old ? ['-sf', String(old)] : [])], { encoding: 'utf8' })
    if (r.status !== 0) return fail(`HAProxy did not start: ${r.stderr}`)
  }

  function stopHaproxy() {
    const p = haproxyRunningPid()
    if (p) process.kill(p, 'SIGTERM')
  }

  /** Clean shutdown, last node last (it is then the one marked safe to start the next cluster from). */
  async function down() {
    stopHaproxy()
    for (const n of [...nodes].reverse()) {
      const p = pidOf(n)
      if (!p) continue
      spawnSync('mariadb-admin', ['--no-defaults', `--socket=${n.socket}`, '-uroot', 'shutdown'], { stdio: 'ignore' })
      for (let t = 0; t < 600 && alive(p); t++) await sleep(100)
      if (alive(p)) return fail(`node ${n.i} did not stop within 60 s`)
    }
  }

  /** SIGKILL of one node's mariadbd; resolves once it is gone. */
  async function killNode(i) {
    const p = pidOf(node(i))
    if (!p) return fail(`node ${i} is not running`)
    process.kill(p, 'SIGKILL')
    for (let t = 0; t < 300 && alive(p); t++) await sleep(50)
  }

  /** The database and its app user, created through the first synced node (the cluster replicates both). */
  function ensureDatabase(settings, { recreate = false } = {}) {
    const n = nodes.find((x) => nodeStatus(x)?.synced)
    if (!n) return fail('no synced node of the cluster answers')
    sqlOn(n, databaseStatements(settings, { recreate, fail }))
  }

  return {
    base, nodes, sqlPort, node, up, down, startNode, killNode, nodeStatus, sqlOn, pidOf, ensureDatabase, startHaproxy, stopHaproxy,
    status: () => nodes.map((n) => nodeStatus(n) ?? { node: n.i, port: n.port, pid: pidOf(n), state: 'down' }),
    // prepareDatabase's server interface: the app reaches the cluster through HAProxy's SQL address
    startMariadb: async () => { await up() },
  }
}

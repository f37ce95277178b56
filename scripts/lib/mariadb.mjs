// Runs a project-local MariaDB bound to loopback, with its own data folder, socket and pid file.
import { existsSync, mkdirSync, readFileSync } from 'node:fs'
import { relative, resolve } from 'node:path'
import { spawn, spawnSync } from 'node:child_process'
import net from 'node:net'
import { dataDir, root } from './env.mjs'
import { ensureDebianPackage } from './deps.mjs'
import { log, fail as failAndExit } from './run.mjs'

function portTaken(port) {
  return new Promise((done) => {
    const s = net.connect({ host: '127.0.0.1', port }, () => { s.destroy(); done(true) })
    s.on('error', () => done(false))
  })
}

/**
 * Commits are durable by default: every commit is on disk before it is acknowledged (innodb_flush_log_at_trx_commit=1,
 * and sync_binlog=1 should a binary log be turned on). TERCET_DB_FAST_COMMIT=1 writes the log to the operating
 * system at each commit and to disk about once a second instead: faster, but a power cut or a crash of the machine
 * can lose about the last second of runs that stations were told were stored.
 */
export function commitSetting(env = process.env) {
  const fast = env.TERCET_DB_FAST_COMMIT === '1'
  return { fast, flushLog: fast ? 2 : 1, syncBinlog: fast ? 0 : 1 }
}

const ident = (s, fail) => { if (!/^[a-z_][a-z0-9_]*$/.test(s)) fail(`bad identifier ${s}`); return s }
const quote = (s) => `'${String(s).replace(/\\/g, '\\\\').replace(/'/g, "\\'")}'`

/**
 * The statements that create (or, with recreate, drop and create) a database and its application user with its
 * grants; the same for the project's server and for a cluster node.
 */
export function databaseStatements({ database, user, password }, { recreate = false, fail = failAndExit } = {}) {
  const db = ident(database, fail)
  const u = quote(user)
  return [
    recreate ? `DROP DATABASE IF EXISTS \`${db}\`;` : '',
    `CREATE DATABASE IF NOT EXISTS \`${db}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci;`,
    `CREATE USER IF NOT EXISTS ${u}@'127.0.0.1' IDENTIFIED BY ${quote(password)};`,
    `ALTER USER ${u}@'127.0.0.1' IDENTIFIED BY ${quote(password)};`,
    `GRANT ALL PRIVILEGES ON \`${db}\`.* TO ${u}@'127.0.0.1';`,
    // bench and test databases share the prefix; the app user may create and drop them
    `GRANT ALL PRIVILEGES ON \`${db.split('_')[0]}\\_%\`.* TO ${u}@'127.0.0.1';`,
    'FLUSH PRIVILEGES;',
  ].join(' ')
}

/**
 * A MariaDB server with its data, socket, pid file and error log under `base` (default .data/mariadb, the one
 * npm start and npm test use). Tests that stop or kill their database run their own under another folder and port.
 * `fail` reports a problem: by default it prints and exits, as the scripts want; a test passes one that throws.
 */
export function mariadbInstance({ base = resolve(dataDir, 'mariadb'), fail = failAndExit } = {}) {
  const datadir = resolve(base, 'data')
  const socket = resolve(base, 'mysqld.sock')
  const pidFile = resolve(base, 'mysqld.pid')
  const errLog = resolve(base, 'mysqld.err')
  // its own folder for the temporary tables of large sorts and groupings: another program tidying the system's
  // temporary folder cannot pull a file from under a running query
  const tmpDir = resolve(base, 'tmp')
  const where = relative(root, base) || base

  const admin = (args, opts = {}) => spawnSync('mariadb-admin', ['--no-defaults', `--socket=${socket}`, '-uroot', ...args], { encoding: 'utf8', ...opts })
  const isRunning = () => existsSync(socket) && admin(['ping']).status === 0

  function sql(statement) {
    const r = spawnSync('mariadb', ['--no-defaults', `--socket=${socket}`, '-uroot', '-e', statement], { encoding: 'utf8' })
    if (r.status !== 0) fail(`MariaDB statement failed: ${r.stderr}`)
    return r.stdout
  }

  /** A server started earlier, perhaps with another setting, is brought to the one asked for (both are dynamic). */
  function applyCommitSetting() {
    const c = commitSetting()
    sql(`SET GLOBAL innodb_flush_log_at_trx_commit = ${c.flushLog}; SET GLOBAL sync_binlog = ${c.syncBinlog};`)
    if (c.fast) log('WARNING: TERCET_DB_FAST_COMMIT=1: commits reach the disk about once a second; a power cut can lose the last second of acknowledged runs.')
  }

  async function startMariadb(port) {
    ensureDebianPackage('mariadbd', 'mariadb-server')
    if (isRunning()) { applyCommitSetting(); return }
    if (await portTaken(port)) return fail(`port ${port} on 127.0.0.1 is already in use; set TERCET_DB_PORT to a free port (e.g. TERCET_DB_PORT=3317 npm start).`)
    mkdirSync(tmpDir, { recursive: true })
    if (!existsSync(resolve(datadir, 'mysql'))) {
      log(`initialising the MariaDB data folder (${where})…`)
      const init = spawnSync('mariadb-install-db', ['--no-defaults', '--user=root', `--datadir=${datadir}`,
        '--auth-root-authentication-method=socket', '--skip-test-db'], { stdio: ['ignore', 'ignore', 'inherit'] })
      if (init.status !== 0) return fail(`command failed (${init.status ?? init.signal}): mariadb-install-db`)
    }
    log(`starting MariaDB on 127.0.0.1:${port}…`)
    const child = spawn('mariadbd', ['--no-defaults', '--user=root', `--datadir=${datadir}`, '--bind-address=127.0.0.1',
      `--port=${port}`, `--socket=${socket}`, `--pid-file=${pidFile}`, `--log-error=${errLog}`, `--tmpdir=${tmpDir}`, '--skip-name-resolve',
      '--innodb-buffer-pool-size=512M', `--innodb-flush-log-at-trx-commit=${commitSetting().flushLog}`, `--sync-binlog=${commitSetting().syncBinlog}`,
      '--max-connections=300', '--thread-handling=pool-of-threads',
      // a statistics fold runs for tens of milliseconds: after 20 ms its thread-pool group takes another thread,
      // so the short run transactions queued behind it do not wait the default half second
      '--thread-pool-stall-limit=20',
      '--character-set-server=utf8mb4', '--collation-server=utf8mb4_unicode_ci'],
    { detached: true, stdio: 'ignore' })
    child.unref()
    // crash recovery after a kill takes a while on a loaded machine
    for (let i = 0; i < 240; i++) {
      if (isRunning()) { applyCommitSetting(); return }
      await new Promise((r) => setTimeout(r, 250))
    }
    const tail = existsSync(errLog) ? readFileSync(errLog, 'utf8').split('\n').slice(-15).join('\n') : ''
    return fail(`MariaDB did not start within 60 s. Last lines of ${where}/mysqld.err:\n${tail}`)
  }

  /** The server's process id while it runs (its pid file), else null. */
  function pid() {
    if (!existsSync(pidFile)) return null
    const n = Number(readFileSync(pidFile, 'utf8').trim())
    return Number.isInteger(n) && n > 0 ? n : null
  }

  function stopMariadb() {
    if (!isRunning()) { log('MariaDB is not running.'); return }
    admin(['shutdown'])
    log('MariaDB stopped.')
  }

  /** Creates (or, with recreate, drops and creates) a database and grants the application user on it. */
  function ensureDatabase(settings, { recreate = false } = {}) {
    sql(databaseStatements(settings, { recreate, fail }))
  }

  return { base, socket, errLog, isRunning, startMariadb, stopMariadb, ensureDatabase, pid, sql }
}

// the project's own server, as npm start, npm test and the benchmarks use it
const project = mariadbInstance()
export const socket = project.socket
export const isRunning = project.isRunning
export const startMariadb = project.startMariadb
export const stopMariadb = project.stopMariadb
export const ensureDatabase = project.ensureDatabase

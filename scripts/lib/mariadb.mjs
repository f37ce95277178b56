// Runs a project-local MariaDB bound to loopback, with its own data folder, socket and pid file.
import { existsSync, mkdirSync, readFileSync } from 'node:fs'
import { resolve } from 'node:path'
import { spawn, spawnSync } from 'node:child_process'
import net from 'node:net'
import { dataDir } from './env.mjs'
import { ensureDebianPackage } from './deps.mjs'
import { log, fail, runOrFail } from './run.mjs'

const base = resolve(dataDir, 'mariadb')
const datadir = resolve(base, 'data')
export const socket = resolve(base, 'mysqld.sock')
const pidFile = resolve(base, 'mysqld.pid')
const errLog = resolve(base, 'mysqld.err')

function admin(args, opts = {}) {
  return spawnSync('mariadb-admin', ['--no-defaults', `--socket=${socket}`, '-uroot', ...args], { encoding: 'utf8', ...opts })
}

export function isRunning() {
  return existsSync(socket) && admin(['ping']).status === 0
}

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

/** A server started earlier, perhaps with another setting, is brought to the one asked for (both are dynamic). */
function applyCommitSetting() {
  const c = commitSetting()
  sql(`SET GLOBAL innodb_flush_log_at_trx_commit = ${c.flushLog}; SET GLOBAL sync_binlog = ${c.syncBinlog};`)
  if (c.fast) log('WARNING: TERCET_DB_FAST_COMMIT=1: commits reach the disk about once a second; a power cut can lose the last second of acknowledged runs.')
}

export async function startMariadb(port) {
  ensureDebianPackage('mariadbd', 'mariadb-server')
  if (isRunning()) { applyCommitSetting(); return }
  if (await portTaken(port)) fail(`port ${port} on 127.0.0.1 is already in use; set TERCET_DB_PORT to a free port (e.g. TERCET_DB_PORT=3317 npm start).`)
  mkdirSync(base, { recursive: true })
  if (!existsSync(resolve(datadir, 'mysql'))) {
    log('initialising the MariaDB data folder (.data/mariadb)…')
    runOrFail('mariadb-install-db', ['--no-defaults', '--user=root', `--datadir=${datadir}`,
      '--auth-root-authentication-method=socket', '--skip-test-db'], { stdio: ['ignore', 'ignore', 'inherit'] })
  }
  log(`starting MariaDB on 127.0.0.1:${port}…`)
  const child = spawn('mariadbd', ['--no-defaults', '--user=root', `--datadir=${datadir}`, '--bind-address=127.0.0.1',
    `--port=${port}`, `--socket=${socket}`, `--pid-file=${pidFile}`, `--log-error=${errLog}`, '--skip-name-resolve',
    '--innodb-buffer-pool-size=512M', `--innodb-flush-log-at-trx-commit=${commitSetting().flushLog}`, `--sync-binlog=${commitSetting().syncBinlog}`,
    '--max-connections=300', '--thread-handling=pool-of-threads',
    // a statistics fold runs for tens of milliseconds: after 20 ms its thread-pool group takes another thread,
    // so the short run transactions queued behind it do not wait the default half second
    '--thread-pool-stall-limit=20',
    '--character-set-server=utf8mb4', '--collation-server=utf8mb4_unicode_ci'],
  { detached: true, stdio: 'ignore' })
  child.unref()
  for (let i = 0; i < 120; i++) {
    if (isRunning()) { applyCommitSetting(); return }
    await new Promise((r) => setTimeout(r, 250))
  }
  const tail = existsSync(errLog) ? readFileSync(errLog, 'utf8').split('\n').slice(-15).join('\n') : ''
  fail(`MariaDB did not start within 30 s. Last lines of .data/mariadb/mysqld.err:\n${tail}`)
}

export function stopMariadb() {
  if (!isRunning()) { log('MariaDB is not running.'); return }
  admin(['shutdown'])
  log('MariaDB stopped.')
}

function sql(statement) {
  const r = spawnSync('mariadb', ['--no-defaults', `--socket=${socket}`, '-uroot', '-e', statement], { encoding: 'utf8' })
  if (r.status !== 0) fail(`MariaDB statement failed: ${r.stderr}`)
  return r.stdout
}

const ident = (s) => { if (!/^[a-z_][a-z0-9_]*$/.test(s)) fail(`bad identifier ${s}`); return s }
const quote = (s) => `'${String(s).replace(/\\/g, '\\\\').replace(/'/g, "\\'")}'`

/** Creates (or, with recreate, drops and creates) a database and grants the application user on it. */
export function ensureDatabase({ database, user, password }, { recreate = false } = {}) {
  const db = ident(database)
  const u = quote(user)
  sql([
    recreate ? `DROP DATABASE IF EXISTS \`${db}\`;` : '',
    `CREATE DATABASE IF NOT EXISTS \`${db}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci;`,
    `CREATE USER IF NOT EXISTS ${u}@'127.0.0.1' IDENTIFIED BY ${quote(password)};`,
    `ALTER USER ${u}@'127.0.0.1' IDENTIFIED BY ${quote(password)};`,
    `GRANT ALL PRIVILEGES ON \`${db}\`.* TO ${u}@'127.0.0.1';`,
    // bench and test databases share the prefix; the app user may create and drop them
    `GRANT ALL PRIVILEGES ON \`${db.split('_')[0]}\\_%\`.* TO ${u}@'127.0.0.1';`,
    'FLUSH PRIVILEGES;',
  ].join(' '))
}

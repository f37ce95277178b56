// Consistent logical backups of one database of the project's MariaDB, and restores of them into a database.
import { spawn } from 'node:child_process'
import { createReadStream, createWriteStream, fsyncSync, mkdirSync, openSync, closeSync, renameSync, rmSync, statSync } from 'node:fs'
import { resolve } from 'node:path'
import { pipeline } from 'node:stream/promises'
import { createGunzip, createGzip } from 'node:zlib'
import { dataDir } from './env.mjs'
import { socket } from './mariadb.mjs'

export const backupDir = resolve(dataDir, 'backups')

const ident = (s) => { if (!/^[a-z_][a-z0-9_]*$/.test(s)) throw new Error(`"${s}" is not a database name this project uses`); return s }

/** 2026-12-02T19:31:05.123Z → 20261202-193105Z: sorts by time and is safe in a file name. */
export function stamp(d = new Date()) {
  return d.toISOString().replace(/[-:]/g, '').replace('T', '-').replace(/\.\d+Z$/, 'Z')
}

function waitFor(child, what) {
  let stderr = ''
  child.stderr.on('data', (b) => { stderr += b })
  return new Promise((done, fail) => {
    child.on('error', fail)
    child.on('close', (code) => (code === 0 ? done() : fail(new Error(`${what} exited with ${code}: ${stderr.trim()}`))))
  })
}

/**
 * Dumps `database` with --single-transaction: every table is read in one consistent snapshot while stations keep
 * posting, without locking them. The file is written under a temporary name, flushed to disk and then renamed, so a
 * file in .data/backups/ is always complete. Returns its path, size and the moments the dump started and finished.
 */
export async function backupDatabase(database, { dir = backupDir } = {}) {
  const db = ident(database)
  mkdirSync(dir, { recursive: true })
  const startedAt = new Date()
  const file = resolve(dir, `${db}-${stamp(startedAt)}.sql.gz`)
  const part = `${file}.part`
  const dump = spawn('mariadb-dump', ['--no-defaults', `--socket=${socket}`, '-uroot', '--single-transaction', '--quick',
    '--skip-lock-tables', '--hex-blob', '--routines', '--triggers', '--events', '--default-character-set=utf8mb4', db],
  { stdio: ['ignore', 'pipe', 'pipe'] })
  try {
    await Promise.all([pipeline(dump.stdout, createGzip({ level: 6 }), createWriteStream(part)), waitFor(dump, 'mariadb-dump')])
    const fd = openSync(part, 'r')
    try { fsyncSync(fd) } finally { closeSync(fd) }
    renameSync(part, file)
  } catch (e) {
    rmSync(part, { force: true })
    throw e
  }
  return { file, bytes: statSync(file).size, startedAt, finishedAt: new Date() }
}

async function sqlOut(args) {
  const child = spawn('mariadb', ['--no-defaults', `--socket=${socket}`, '-uroot', '-N', '-B', ...args], { stdio: ['ignore', 'pipe', 'pipe'] })
  let out = ''
  child.stdout.on('data', (b) => { out += b })
  await waitFor(child, 'mariadb')
  return out.trim()
}

/**
 * Loads a backup into `database`. A database that already holds tables is refused unless `replace` is set, which
 * drops it first: a restore never mixes a backup with other rows. The app user is granted on it as on any other.
 */
export async function restoreDatabase(file, database, { replace = false, appUser } = {}) {
  const db = ident(database)
  statSync(file)
  const tables = Number(await sqlOut(['-e', `SELECT COUNT(*) FROM information_schema.tables WHERE table_schema = '${db}'`]))
  if (tables > 0 && !replace) throw new Error(`database ${db} already holds ${tables} tables; pass --replace to drop it and restore into it`)
  await sqlOut(['-e', `DROP DATABASE IF EXISTS \`${db}\`; CREATE DATABASE \`${db}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci;`
    + (appUser ? ` GRANT ALL PRIVILEGES ON \`${db}\`.* TO '${appUser.replace(/'/g, '')}'@'127.0.0.1';` : '')])
  const load = spawn('mariadb', ['--no-defaults', `--socket=${socket}`, '-uroot', '--default-character-set=utf8mb4', db], { stdio: ['pipe', 'ignore', 'pipe'] })
  const source = createReadStream(file)
  await Promise.all([pipeline(file.endsWith('.gz') ? source.pipe(createGunzip()) : source, load.stdin), waitFor(load, 'mariadb (restore)')])
  return { database: db, tables: Number(await sqlOut(['-e', `SELECT COUNT(*) FROM information_schema.tables WHERE table_schema = '${db}'`])) }
}

// npm run db:backup [-- --database NAME]: a consistent, compressed dump of the database into .data/backups/.
import { relative } from 'node:path'
import { dbSettings, loadEnv, root } from './lib/env.mjs'
import { startMariadb } from './lib/mariadb.mjs'
import { backupDatabase } from './lib/backup.mjs'
import { fail, log } from './lib/run.mjs'

const env = loadEnv()
const args = process.argv.slice(2)
const at = args.indexOf('--database')
const database = at >= 0 ? args[at + 1] : env.TERCET_DB_NAME || 'tercet'
await startMariadb(dbSettings(env, database).port)
try {
  const b = await backupDatabase(database)
  log(`backed up ${database} to ${relative(root, b.file)} (${(b.bytes / 1e6).toFixed(1)} MB compressed, ${((b.finishedAt - b.startedAt) / 1000).toFixed(1)} s)`)
  process.stdout.write(JSON.stringify({ database, file: b.file, bytes: b.bytes, startedAt: b.startedAt, finishedAt: b.finishedAt }) + '\n')
} catch (e) {
  fail(`the backup failed: ${e.message}`)
}

// npm run db:restore -- FILE [--database NAME] [--replace]: loads a backup made by npm run db:backup.
import { resolve } from 'node:path'
import { dbSettings, loadEnv } from './lib/env.mjs'
import { startMariadb } from './lib/mariadb.mjs'
import { restoreDatabase } from './lib/backup.mjs'
import { fail, log } from './lib/run.mjs'

const env = loadEnv()
const args = process.argv.slice(2)
const at = args.indexOf('--database')
const database = at >= 0 ? args[at + 1] : env.TERCET_DB_NAME || 'tercet'
const file = args.find((a, i) => !a.startsWith('--') && args[i - 1] !== '--database')
if (!file) fail('usage: npm run db:restore -- FILE [--database NAME] [--replace]   (FILE from .data/backups/)')
const db = dbSettings(env, database)
await startMariadb(db.port)
try {
  const r = await restoreDatabase(resolve(process.cwd(), file), database, { replace: args.includes('--replace'), appUser: db.user })
  log(`restored ${r.tables} tables into ${r.database}; stop the server while restoring over a database it uses, and start it again after`)
} catch (e) {
  fail(`the restore failed: ${e.message}`)
}

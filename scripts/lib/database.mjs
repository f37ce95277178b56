import { resolve } from 'node:path'
import { root, dbSettings, serverEnv } from './env.mjs'
import { startMariadb, ensureDatabase } from './mariadb.mjs'
import { runOrFail } from './run.mjs'

/**
 * Starts MariaDB, creates the database and its user, migrates, and seeds the demo when empty. `server` is another
 * MariaDB than the project's (mariadbInstance() of mariadb.mjs, for tests that stop their own); its port is
 * env.TERCET_DB_PORT as for the project's.
 */
export async function prepareDatabase(env, database, { recreate = false, seed = true, tokenFile, server } = {}) {
  const db = dbSettings(env, database)
  await (server?.startMariadb ?? startMariadb)(db.port)
  ;(server?.ensureDatabase ?? ensureDatabase)(db, { recreate })
  const args = [resolve(root, 'scripts/db-setup.ts')]
  if (seed) args.push('--seed-demo')
  if (tokenFile) args.push(`--tokens=${tokenFile}`)
  runOrFail(resolve(root, 'node_modules/.bin/jiti'), args, { cwd: root, env: serverEnv(env, db) })
  return db
}

// Developer CLI: jiti scripts/migrate.ts latest|rollback|list (database from NUXT_DB_* or .env defaults)
import { connectionFromEnv, createKnex } from '../server/database/connection'
import { migrationSource } from '../server/database/migration-source'

const cmd = process.argv[2] ?? 'latest'
const db = createKnex(connectionFromEnv())
try {
  if (cmd === 'latest') console.log(await db.migrate.latest({ migrationSource }))
  else if (cmd === 'rollback') console.log(await db.migrate.rollback({ migrationSource }, process.argv.includes('--all')))
  else if (cmd === 'list') console.log(await db.migrate.list({ migrationSource }))
  else { console.error('usage: migrate.ts latest|rollback [--all]|list'); process.exitCode = 2 }
} finally {
  await db.destroy()
}

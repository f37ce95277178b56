// Knex settings for scripts and tests. The knex CLI cannot load TypeScript on Node 20,
// so migrations run through scripts/db-setup.ts with the static migration source.
import { connectionFromEnv } from './server/database/connection'
import { migrationSource } from './server/database/migration-source'

export default {
  client: 'mysql2',
  connection: { ...connectionFromEnv(), timezone: 'Z' },
  migrations: { migrationSource, tableName: 'knex_migrations' },
}

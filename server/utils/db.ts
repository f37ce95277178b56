import type { Knex } from 'knex'
import { createKnex } from '../database/connection'

let instance: Knex | undefined

/**
 * Connections this process may hold (TERCET_DB_POOL_MAX, default 48, tuned for one process on the 2-core box). With
 * several instances on one database, their sum must stay under the server's max_connections (151 by default):
 * e.g. three instances at 40 each.
 */
export function poolMax(env: NodeJS.ProcessEnv = process.env): number {
  const n = Number(env.TERCET_DB_POOL_MAX)
  return Number.isInteger(n) && n > 0 ? n : 48
}

/** The server's single Knex instance, created on first use from runtime config. */
export function useDb(): Knex {
  if (!instance) {
    const { db } = useRuntimeConfig()
    instance = createKnex({ host: db.host, port: Number(db.port), user: db.user, password: db.password, database: db.database }, { min: 0, max: poolMax() })
  }
  return instance
}

export async function closeDb(): Promise<void> {
  if (instance) { await instance.destroy(); instance = undefined }
}

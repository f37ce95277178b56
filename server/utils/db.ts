import type { Knex } from 'knex'
import { createKnex } from '../database/connection'

let instance: Knex | undefined

/** The server's single Knex instance, created on first use from runtime config. */
export function useDb(): Knex {
  if (!instance) {
    const { db } = useRuntimeConfig()
    instance = createKnex({ host: db.host, port: Number(db.port), user: db.user, password: db.password, database: db.database }, { min: 0, max: 48 })
  }
  return instance
}

export async function closeDb(): Promise<void> {
  if (instance) { await instance.destroy(); instance = undefined }
}

import type { Knex } from 'knex'

/** Test-run history for the demo lots; filled in through the ingest service. */
export async function seedDemoHistory(_db: Knex): Promise<number> {
  return 0
}

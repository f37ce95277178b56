import type { Knex } from 'knex'

/** The person responsible for a station: who hears about its calibration and its silences. */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('stations', (t) => {
    t.integer('owner_user_id').unsigned().references('users.id')
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('stations', (t) => {
    t.dropForeign(['owner_user_id'])
    t.dropColumn('owner_user_id')
  })
}

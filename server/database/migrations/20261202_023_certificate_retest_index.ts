import type { Knex } from 'knex'

/** Quality's list of certificates touched by a retest reads them by this column on every shipments page. */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('certificates', (t) => { t.index(['retest_run_id']) })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('certificates', (t) => { t.dropIndex(['retest_run_id']) })
}

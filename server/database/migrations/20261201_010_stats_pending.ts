import type { Knex } from 'knex'

// Runs whose measurements are not yet folded into lot_param_stats. A run's transaction adds its row here instead of
// updating some twenty statistics rows; the folder adds many runs to those rows at once and deletes their entries.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('lot_stats_pending', (t) => {
    t.bigInteger('run_id').unsigned().primary().references('test_runs.id').onDelete('CASCADE')
    t.integer('lot_id').unsigned().notNullable()
    t.index(['lot_id'])
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('lot_stats_pending')
}

import type { Knex } from 'knex'

/**
 * Counts of each lot parameter's plausible values in bins of width 2^e (bin k holds values in [k·2^e, (k+1)·2^e)),
 * kept by the statistics fold per lot × step × parameter × revision for first attempts and for all attempts, so the
 * parameter histogram and the phase-noise percentiles read a few hundred rows instead of the lot's measurements.
 * The group row keeps the exponent and the extremes it was chosen from; the exponent only grows (bins are merged).
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('lot_param_bin_groups', (t) => {
    t.integer('lot_id').unsigned().notNullable()
    t.string('step', 24).notNullable()
    t.string('name', 48).notNullable()
    t.double('qualifier').notNullable()
    t.integer('revision_id').unsigned().notNullable()
    t.smallint('exponent').notNullable()
    // over all attempts: the exponent is a function of these alone
    t.double('min_value').notNullable()
    t.double('max_value').notNullable()
    t.primary(['lot_id', 'step', 'name', 'qualifier', 'revision_id'])
  })
  await knex.schema.createTable('lot_param_bins', (t) => {
    t.integer('lot_id').unsigned().notNullable()
    t.string('step', 24).notNullable()
    t.string('name', 48).notNullable()
    t.double('qualifier').notNullable()
    t.integer('revision_id').unsigned().notNullable()
    t.bigInteger('k').notNullable()
    t.integer('n_first').unsigned().notNullable().defaultTo(0)
    t.integer('n_all').unsigned().notNullable().defaultTo(0)
    t.primary(['lot_id', 'step', 'name', 'qualifier', 'revision_id', 'k'])
  })
  // runs stored before: the fold's rebuild marks make it count their bins from the rows (and recompute their
  // statistics rows, which come out the same)
  await knex.raw(`INSERT IGNORE INTO lot_stats_rebuild (lot_id, step, revision_id, station_id)
    SELECT DISTINCT lot_id, step, COALESCE(revision_id, 0), station_id FROM test_runs`)
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('lot_param_bins')
  await knex.schema.dropTable('lot_param_bin_groups')
}

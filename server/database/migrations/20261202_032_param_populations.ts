import type { Knex } from 'knex'

// Every plausible attempt kept beside the first attempts in the parameter rows, the drift sums of each parameter and
// revision in test order, the groups a late value left to be repaired, and a measurements index that leads with what
// the parameter views filter.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('lot_param_stats', (t) => {
    // every plausible attempt (first attempts are in both populations); sums about a_shift like the first population's
    t.integer('a_n').notNullable().defaultTo(0)
    t.double('a_shift').notNullable().defaultTo(0)
    t.double('a_sum_d').notNullable().defaultTo(0)
    t.double('a_sumsq_d').notNullable().defaultTo(0)
    t.double('a_min_value').notNullable().defaultTo(0)
    t.double('a_max_value').notNullable().defaultTo(0)
    t.double('a_mr_sum').notNullable().defaultTo(0)
    t.integer('a_mr_n').notNullable().defaultTo(0)
    t.double('a_last_value')
    t.datetime('a_last_started_at', { precision: 3 })
    t.boolean('a_mr_stale').notNullable().defaultTo(false)
    t.integer('a_out_of_spec').notNullable().defaultTo(0)
  })

  // value against rank in test order, over all stations of a revision: Σ rank·d, Σd, Σd² with d = value − shift
  await knex.schema.createTable('lot_param_trend', (t) => {
    t.integer('lot_id').unsigned().notNullable()
    t.string('step', 24).notNullable()
    t.string('name', 48).notNullable()
    t.double('qualifier').notNullable()
    t.integer('revision_id').unsigned().notNullable()
    // 0: plausible first attempts, 1: every plausible attempt
    t.boolean('all_attempts').notNullable()
    t.integer('n').notNullable().defaultTo(0)
    t.double('shift').notNullable()
    t.double('sum_rd').notNullable().defaultTo(0)
    t.double('sum_d').notNullable().defaultTo(0)
    t.double('sumsq_d').notNullable().defaultTo(0)
    // the last value in test order: a value at or after it takes rank n
    t.datetime('last_started_at', { precision: 3 })
    t.bigInteger('last_id').unsigned()
    t.boolean('stale').notNullable().defaultTo(false)
    t.primary(['lot_id', 'step', 'name', 'qualifier', 'revision_id', 'all_attempts'])
  })

  // parameter and revision groups whose moving ranges or drift sums a late value left stale
  await knex.schema.createTable('lot_stats_repair', (t) => {
    t.integer('lot_id').unsigned().notNullable()
    t.string('step', 24).notNullable()
    t.string('name', 48).notNullable()
    t.double('qualifier').notNullable()
    t.integer('revision_id').unsigned().notNullable()
    t.primary(['lot_id', 'step', 'name', 'qualifier', 'revision_id'])
  })

  // one parameter's values of one revision in test order, read forwards or backwards as a range; the columns the
  // charts, tails and repairs read ride along, so those reads never visit the table rows
  await knex.raw(`ALTER TABLE measurements ADD INDEX measurements_series_idx
    (lot_id, step, name, qualifier, revision_id, started_at, id, implausible, first_attempt, value, station_id, run_id),
    DROP INDEX measurements_param_idx`)

  // the rows are built again by the fold, both populations and the drift sums together
  await knex('lot_param_stats').del()
  await knex('lot_stats_rebuild').del()
  await knex.raw('INSERT IGNORE INTO lot_stats_pending (run_id, lot_id) SELECT id, lot_id FROM test_runs')
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw(`ALTER TABLE measurements ADD INDEX measurements_param_idx (lot_id, name, qualifier, step, started_at),
    DROP INDEX measurements_series_idx`)
  await knex.schema.dropTable('lot_stats_repair')
  await knex.schema.dropTable('lot_param_trend')
  await knex.schema.alterTable('lot_param_stats', (t) => {
    for (const c of ['a_n', 'a_shift', 'a_sum_d', 'a_sumsq_d', 'a_min_value', 'a_max_value', 'a_mr_sum', 'a_mr_n', 'a_last_value', 'a_last_started_at', 'a_mr_stale', 'a_out_of_spec']) t.dropColumn(c)
  })
}

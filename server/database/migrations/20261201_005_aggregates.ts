import type { Knex } from 'knex'

// Incremental per-lot aggregates, one row per station so concurrent stations never contend for one counter row.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('lot_step_stats', (t) => {
    t.integer('lot_id').unsigned().notNullable().references('lots.id')
    t.string('step', 24).notNullable()
    t.integer('station_id').unsigned().notNullable().references('stations.id')
    t.integer('runs').notNullable().defaultTo(0)
    t.integer('units').notNullable().defaultTo(0)
    t.integer('first_pass').notNullable().defaultTo(0)
    // may go negative on one station's row when a retest elsewhere changes a unit's latest verdict; the sum is right
    t.integer('latest_pass').notNullable().defaultTo(0)
    t.primary(['lot_id', 'step', 'station_id'])
  })
  await knex.schema.createTable('lot_param_stats', (t) => {
    t.integer('lot_id').unsigned().notNullable().references('lots.id')
    t.string('step', 24).notNullable()
    t.string('name', 48).notNullable()
    t.double('qualifier').notNullable()
    t.integer('station_id').unsigned().notNullable().references('stations.id')
    t.string('unit', 16).notNullable()
    // first attempts only; sums are taken about `shift` (the first value seen) to avoid cancellation
    t.integer('n').notNullable().defaultTo(0)
    t.double('shift').notNullable()
    t.double('sum_d').notNullable().defaultTo(0)
    t.double('sumsq_d').notNullable().defaultTo(0)
    t.double('min_value').notNullable()
    t.double('max_value').notNullable()
    // moving ranges in test order within this station's sequence
    t.double('mr_sum').notNullable().defaultTo(0)
    t.integer('mr_n').notNullable().defaultTo(0)
    t.double('last_value')
    t.datetime('last_started_at', { precision: 3 })
    t.boolean('mr_stale').notNullable().defaultTo(false)
    t.integer('out_of_spec').notNullable().defaultTo(0)
    // failing measurements over all attempts, for the failure Pareto
    t.integer('fail_all').notNullable().defaultTo(0)
    t.primary(['lot_id', 'step', 'name', 'qualifier', 'station_id'])
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('lot_param_stats')
  await knex.schema.dropTable('lot_step_stats')
}

import type { Knex } from 'knex'

// Parameter statistics per revision of the specification (capability is figured against the limits each value was
// judged by), implausible values kept out of them, rows a late run left needing a rebuild, and one fold lease row
// per lot in place of a server-wide named lock.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('measurements', (t) => {
    // copied from the run like lot, station and step, so a parameter's values of one revision read one range
    t.integer('revision_id').unsigned().notNullable().defaultTo(0)
    // a value no real unit produces on a working bench: stored and judged, but kept out of capability and charts
    t.boolean('implausible').notNullable().defaultTo(false)
  })
  await knex.raw('UPDATE measurements m JOIN test_runs r ON r.id = m.run_id SET m.revision_id = COALESCE(r.revision_id, 0)')

  // rows are now kept per revision: drop them and queue every run, so the fold builds them again
  await knex('lot_param_stats').del()
  // one statement: the foreign key on lot_id needs the primary key's index at every moment
  await knex.raw(`ALTER TABLE lot_param_stats ADD COLUMN revision_id INT UNSIGNED NOT NULL DEFAULT 0 AFTER qualifier,
    DROP PRIMARY KEY, ADD PRIMARY KEY (lot_id, step, name, qualifier, revision_id, station_id)`)
  await knex.raw('INSERT IGNORE INTO lot_stats_pending (run_id, lot_id) SELECT id, lot_id FROM test_runs')

  // a late run that becomes a unit's first attempt moves values out of the first-attempt sample; min and max cannot
  // be taken apart again, so the rows of that lot, step, revision and station are recomputed from the measurements
  await knex.schema.createTable('lot_stats_rebuild', (t) => {
    t.integer('lot_id').unsigned().notNullable()
    t.string('step', 24).notNullable()
    t.integer('revision_id').unsigned().notNullable()
    t.integer('station_id').unsigned().notNullable()
    t.primary(['lot_id', 'step', 'revision_id', 'station_id'])
  })

  // a fold of a lot's statistics holds its lot's row here for the length of its transaction and writes it, so two
  // folds of one lot never run at once (on a cluster the second fails certification and is retried)
  await knex.schema.createTable('lot_fold_leases', (t) => {
    t.integer('lot_id').unsigned().primary()
    t.bigInteger('folds').unsigned().notNullable().defaultTo(0)
    t.datetime('folded_at', { precision: 3 })
  })
  await knex.raw('INSERT INTO lot_fold_leases (lot_id) SELECT id FROM lots')
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('lot_fold_leases')
  await knex.schema.dropTable('lot_stats_rebuild')
  await knex('lot_param_stats').del()
  await knex.raw(`ALTER TABLE lot_param_stats DROP PRIMARY KEY, DROP COLUMN revision_id,
    ADD PRIMARY KEY (lot_id, step, name, qualifier, station_id)`)
  await knex.raw('INSERT IGNORE INTO lot_stats_pending (run_id, lot_id) SELECT id, lot_id FROM test_runs')
  await knex.schema.alterTable('measurements', (t) => {
    t.dropColumn('implausible')
    t.dropColumn('revision_id')
  })
}

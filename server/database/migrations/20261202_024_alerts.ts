import type { Knex } from 'knex'

// Alert rules, what they raised, who follows them, and the marks and lease their evaluation runs on. The two tables
// of the first schema were never written; they are replaced by ones that keep each firing's figures and subject.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.dropTable('alert_events')
  await knex.schema.dropTable('alert_rules')
  await knex.schema.createTable('alert_rules', (t) => {
    t.increments('id')
    t.string('name', 120).notNullable()
    t.enum('kind', ['yield_low', 'cpk_low', 'control_rule', 'drift_toward_limit', 'calibration_due', 'station_silent', 'station_bias']).notNullable()
    t.integer('product_id').unsigned().references('products.id')
    // station kinds: one station, or every station when null
    t.integer('station_id').unsigned().references('stations.id')
    t.string('step', 24)
    t.string('parameter', 48)
    t.double('qualifier')
    // X of the rule: yield in %, Cpk, bias in the parameter's unit
    t.double('threshold')
    // N: how many of the latest units the rule looks at
    t.integer('window_units').unsigned()
    // M of the drift rule: how many units ahead the projection looks
    t.integer('horizon_units').unsigned()
    t.integer('silent_minutes').unsigned()
    // Western Electric rules watched, bit k-1 for rule k
    t.tinyint('control_rules').unsigned()
    t.boolean('enabled').notNullable().defaultTo(true)
    t.integer('created_by').unsigned().references('users.id')
    t.datetime('created_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
    t.integer('updated_by').unsigned().references('users.id')
    t.datetime('updated_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
    t.index(['product_id', 'enabled'])
    t.index(['kind', 'enabled'])
  })
  await knex.schema.createTable('alert_firings', (t) => {
    t.bigIncrements('id')
    t.integer('rule_id').unsigned().notNullable().references('alert_rules.id')
    // what the rule fired about, e.g. "product:3/final/output_power/0", "station:4", "instrument:9"
    t.string('subject', 160).notNullable()
    t.string('subject_label', 200).notNullable()
    t.integer('product_id').unsigned().references('products.id')
    t.integer('lot_id').unsigned().references('lots.id')
    t.integer('station_id').unsigned().references('stations.id')
    t.integer('instrument_id').unsigned().references('instruments.id')
    t.string('summary', 500).notNullable()
    t.json('figures').notNullable()
    t.string('link', 500).notNullable()
    t.datetime('raised_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
    t.datetime('acknowledged_at', { precision: 3 })
    t.integer('acknowledged_by').unsigned().references('users.id')
    t.index(['rule_id', 'subject', 'raised_at'])
    t.index(['acknowledged_at', 'raised_at'])
    t.index(['station_id', 'raised_at'])
    t.index(['product_id', 'raised_at'])
  })
  await knex.schema.createTable('alert_comments', (t) => {
    t.bigIncrements('id')
    t.bigInteger('firing_id').unsigned().notNullable().references('alert_firings.id')
    t.integer('user_id').unsigned().notNullable().references('users.id')
    t.string('body', 2000).notNullable()
    t.datetime('created_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
    t.index(['firing_id', 'created_at'])
  })
  await knex.schema.createTable('alert_subscriptions', (t) => {
    t.increments('id')
    t.integer('user_id').unsigned().notNullable().references('users.id')
    t.enum('target', ['rule', 'product', 'station']).notNullable()
    t.integer('target_id').unsigned().notNullable()
    t.datetime('created_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
    t.unique(['user_id', 'target', 'target_id'])
    t.index(['target', 'target_id'])
  })
  // A product whose results changed since its rules were last evaluated. The statistics fold writes it (one
  // statement per fold, not per run); seq tells the evaluator whether a mark came in while it was evaluating.
  await knex.schema.createTable('alert_marks', (t) => {
    t.integer('product_id').unsigned().primary().references('products.id')
    t.bigInteger('seq').unsigned().notNullable().defaultTo(1)
    t.datetime('marked_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
  })
  // One row per background job that only one app instance may run at a time.
  await knex.schema.createTable('job_leases', (t) => {
    t.string('name', 40).primary()
    t.string('owner', 80)
    t.datetime('lease_until', { precision: 3 })
    t.datetime('last_run_at', { precision: 3 })
  })
  // Settings an administrator changes while the product runs, read by every instance.
  await knex.schema.createTable('app_settings', (t) => {
    t.string('name', 60).primary()
    t.string('value', 200).notNullable()
    t.datetime('updated_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
    t.integer('updated_by').unsigned().references('users.id')
  })
  await knex('app_settings').insert({ name: 'calibration_due_soon_days', value: '30' })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('app_settings')
  await knex.schema.dropTable('job_leases')
  await knex.schema.dropTable('alert_marks')
  await knex.schema.dropTable('alert_subscriptions')
  await knex.schema.dropTable('alert_comments')
  await knex.schema.dropTable('alert_firings')
  await knex.schema.dropTable('alert_rules')
  await knex.schema.createTable('alert_rules', (t) => {
    t.increments('id')
    t.string('name', 120).notNullable()
    t.string('kind', 40).notNullable()
    t.integer('product_id').unsigned().references('products.id')
    t.json('params').notNullable()
    t.boolean('enabled').notNullable().defaultTo(true)
    t.integer('created_by').unsigned().references('users.id')
    t.datetime('created_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
  })
  await knex.schema.createTable('alert_events', (t) => {
    t.bigIncrements('id')
    t.integer('rule_id').unsigned().notNullable().references('alert_rules.id')
    t.integer('lot_id').unsigned().references('lots.id')
    t.integer('station_id').unsigned().references('stations.id')
    t.bigInteger('run_id').unsigned().references('test_runs.id')
    t.enum('severity', ['info', 'warning', 'critical']).notNullable()
    t.string('message', 500).notNullable()
    t.datetime('created_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
    t.datetime('acknowledged_at', { precision: 3 })
    t.integer('acknowledged_by').unsigned().references('users.id')
    t.index(['created_at'])
  })
}

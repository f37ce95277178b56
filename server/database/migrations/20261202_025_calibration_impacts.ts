import type { Knex } from 'knex'

// The review opened for each calibration record found out of tolerance: the window of runs it puts in doubt, what
// quality decided for each unit measured in it, and the notices sent to the customers holding their certificates.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('calibration_impacts', (t) => {
    t.increments('id')
    t.integer('record_id').unsigned().notNullable().unique().references('calibration_records.id')
    t.integer('instrument_id').unsigned().notNullable().references('instruments.id')
    // [window_from, window_to): fixed when the review opens (shared/utils/calibration-impact.ts)
    t.datetime('window_from', { precision: 3 }).notNullable()
    t.datetime('window_to', { precision: 3 }).notNullable()
    t.enum('window_basis', ['in_tolerance', 'earliest']).notNullable()
    t.integer('basis_record_id').unsigned().references('calibration_records.id')
    t.enum('status', ['open', 'closed']).notNullable().defaultTo('open')
    // counted when the review opens and again at each decision, notice and closing
    t.integer('runs').unsigned().notNullable().defaultTo(0)
    t.integer('units').unsigned().notNullable().defaultTo(0)
    t.integer('lots').unsigned().notNullable().defaultTo(0)
    t.integer('certificates').unsigned().notNullable().defaultTo(0)
    t.datetime('opened_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
    // null when opened by the record's entry without a user, or on first view
    t.integer('opened_by').unsigned().references('users.id')
    t.datetime('closed_at', { precision: 3 })
    t.integer('closed_by').unsigned().references('users.id')
    t.index(['status', 'opened_at'])
  })
  // the current decision per unit; earlier ones live in the audit log
  await knex.schema.createTable('calibration_impact_decisions', (t) => {
    t.integer('impact_id').unsigned().notNullable().references('calibration_impacts.id')
    t.integer('unit_id').unsigned().notNullable().references('units.id')
    t.enum('decision', ['no_impact', 'retest', 'recall']).notNullable()
    t.string('reason', 500)
    t.integer('decided_by').unsigned().notNullable().references('users.id')
    t.datetime('decided_at', { precision: 3 }).notNullable()
    t.primary(['impact_id', 'unit_id'])
  })
  await knex.schema.createTable('calibration_impact_notices', (t) => {
    t.increments('id')
    t.integer('impact_id').unsigned().notNullable().references('calibration_impacts.id')
    t.integer('customer_id').unsigned().notNullable().references('customers.id')
    t.bigInteger('mail_id').unsigned().notNullable()
    // SHA-256 of the serials, certificate numbers and decisions the notice named: the same content is not sent twice
    t.specificType('content_sha256', 'CHAR(64)').notNullable()
    t.integer('units').unsigned().notNullable()
    t.datetime('sent_at', { precision: 3 }).notNullable()
    t.integer('sent_by').unsigned().notNullable().references('users.id')
    t.index(['impact_id', 'customer_id', 'sent_at'])
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('calibration_impact_notices')
  await knex.schema.dropTable('calibration_impact_decisions')
  await knex.schema.dropTable('calibration_impacts')
}

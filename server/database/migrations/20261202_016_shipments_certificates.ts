import type { Knex } from 'knex'

/**
 * Customers, shipments, retest policy, returns and certificates of conformance.
 * The first certificates table held finished documents only and was never written outside tests;
 * it is replaced by one that freezes a snapshot at issue and renders the document afterwards.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('customers', (t) => {
    t.boolean('active').notNullable().defaultTo(true)
    t.datetime('updated_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
  })

  // 'shipped' becomes 'dispatched': a shipment leaves with a carrier and a tracking reference
  await knex.raw("ALTER TABLE shipments MODIFY status ENUM('draft','released','shipped','dispatched') NOT NULL DEFAULT 'draft'")
  await knex('shipments').where({ status: 'shipped' }).update({ status: 'dispatched' })
  await knex.raw("ALTER TABLE shipments MODIFY status ENUM('draft','released','dispatched') NOT NULL DEFAULT 'draft'")
  await knex.schema.alterTable('shipments', (t) => {
    t.renameColumn('shipped_at', 'dispatched_at')
  })
  await knex.schema.alterTable('shipments', (t) => {
    t.date('planned_ship_date')
    t.text('notes')
    t.integer('created_by').unsigned().references('users.id')
    t.integer('dispatched_by').unsigned().references('users.id')
    t.string('carrier', 80)
    t.string('tracking_ref', 120)
    t.index(['status', 'created_at'])
  })

  // A unit may ship again after a return: one live membership per unit, any number of returned ones.
  await knex.schema.alterTable('shipment_units', (t) => {
    t.dropForeign(['unit_id'])
    t.dropUnique(['unit_id'])
  })
  await knex.schema.alterTable('shipment_units', (t) => {
    t.datetime('added_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
    t.datetime('returned_at', { precision: 3 })
    t.foreign('unit_id').references('units.id')
  })
  await knex.raw('ALTER TABLE shipment_units ADD COLUMN live_unit_id INT UNSIGNED AS (IF(returned_at IS NULL, unit_id, NULL)) PERSISTENT, ADD UNIQUE INDEX shipment_units_live_unit_unique (live_unit_id)')
  await knex.schema.alterTable('shipment_units', (t) => { t.index(['unit_id']) })

  await knex.schema.createTable('unit_returns', (t) => {
    t.increments('id')
    t.integer('unit_id').unsigned().notNullable().references('units.id')
    t.integer('shipment_id').unsigned().notNullable().references('shipments.id')
    t.string('return_number', 40).notNullable()
    t.string('reason', 500).notNullable()
    t.datetime('received_at', { precision: 3 }).notNullable()
    t.integer('received_by').unsigned().notNullable().references('users.id')
    t.index(['unit_id', 'received_at'])
    t.index(['return_number'])
  })

  await knex.schema.createTable('retest_policies', (t) => {
    t.integer('product_id').unsigned().notNullable().references('products.id')
    t.string('step', 24).notNullable()
    t.integer('max_attempts').unsigned().notNullable()
    t.datetime('updated_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
    t.integer('updated_by').unsigned().references('users.id')
    t.primary(['product_id', 'step'])
  })

  // What quality decided about a unit beyond its retest limit at one step
  await knex.schema.createTable('unit_dispositions', (t) => {
    t.increments('id')
    t.integer('unit_id').unsigned().notNullable().references('units.id')
    t.string('step', 24).notNullable()
    t.enum('kind', ['scrap', 'rework', 'deviation']).notNullable()
    t.string('reason', 500).notNullable()
    // the attempt count the decision was made at: a later attempt beyond the limit needs a new one
    t.integer('at_attempts').unsigned().notNullable()
    t.datetime('decided_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
    t.integer('decided_by').unsigned().notNullable().references('users.id')
    t.index(['unit_id', 'step', 'decided_at'])
  })

  await knex.schema.dropTable('certificates')
  await knex.schema.createTable('certificates', (t) => {
    t.increments('id')
    t.string('number', 40).notNullable().unique()
    // at least 100 random bits, written in an unambiguous alphabet; the only key the public page accepts
    t.string('verify_code', 40).notNullable().unique()
    t.integer('unit_id').unsigned().notNullable().references('units.id')
    t.integer('shipment_id').unsigned().notNullable().references('shipments.id')
    t.integer('customer_id').unsigned().notNullable().references('customers.id')
    t.enum('status', ['valid', 'superseded', 'revoked']).notNullable().defaultTo('valid')
    t.integer('template_version').unsigned().notNullable()
    // everything the document states, frozen at issue (JSON); the renderer reads nothing else
    t.specificType('snapshot', 'LONGTEXT').notNullable()
    t.datetime('issued_at', { precision: 3 }).notNullable()
    t.integer('issued_by').unsigned().notNullable().references('users.id')
    t.integer('supersedes_id').unsigned().references('certificates.id')
    t.datetime('status_changed_at', { precision: 3 })
    t.integer('status_changed_by').unsigned().references('users.id')
    t.string('status_reason', 500)
    // rendering happens after the issuing transaction, leased from this row
    t.specificType('sha256', 'CHAR(64)')
    t.integer('byte_length').unsigned()
    t.datetime('rendered_at', { precision: 3 })
    t.datetime('render_lease_until', { precision: 3 })
    t.string('render_lease_owner', 64)
    t.integer('render_attempts').unsigned().notNullable().defaultTo(0)
    t.string('render_error', 500)
    // a later passing run of the unit, stored after issue: the certificate waits for quality to reissue it
    t.bigInteger('retest_run_id').unsigned()
    t.index(['unit_id', 'issued_at'])
    t.index(['shipment_id'])
    t.index(['customer_id', 'issued_at'])
    t.index(['rendered_at', 'render_lease_until'])
  })
  await knex.schema.createTable('certificate_documents', (t) => {
    t.integer('certificate_id').unsigned().primary().references('certificates.id')
    t.specificType('pdf', 'LONGBLOB').notNullable()
  })
  // certificate numbers are consecutive per year; one row per year, locked by the issuing transaction
  await knex.schema.createTable('certificate_sequences', (t) => {
    t.integer('year').unsigned().primary()
    t.integer('last_number').unsigned().notNullable()
  })
  // fixed-window request counters shared by every app instance (public verification, and any other limit)
  await knex.schema.createTable('request_limits', (t) => {
    t.string('bucket', 40).notNullable()
    t.string('client_key', 80).notNullable()
    t.datetime('window_start', { precision: 3 }).notNullable()
    t.integer('hits').unsigned().notNullable()
    t.primary(['bucket', 'client_key'])
    t.index(['window_start'])
  })
  // a valid certificate's unit: a later run of it must supersede or revoke (read by the write path)
  await knex.schema.alterTable('units', (t) => {
    t.boolean('certified').notNullable().defaultTo(false)
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('units', (t) => { t.dropColumn('certified') })
  await knex.schema.dropTable('request_limits')
  await knex.schema.dropTable('certificate_sequences')
  await knex.schema.dropTable('certificate_documents')
  await knex.schema.dropTable('certificates')
  await knex.schema.createTable('certificates', (t) => {
    t.increments('id')
    t.string('number', 40).notNullable().unique()
    t.integer('unit_id').unsigned().notNullable().references('units.id')
    t.integer('shipment_id').unsigned().references('shipments.id')
    t.integer('customer_id').unsigned().notNullable().references('customers.id')
    t.datetime('issued_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
    t.integer('issued_by').unsigned().references('users.id')
    t.specificType('sha256', 'CHAR(64)').notNullable()
    t.specificType('document', 'LONGBLOB').notNullable()
    t.datetime('withdrawn_at', { precision: 3 })
    t.string('withdrawn_reason', 500)
    t.index(['unit_id'])
    t.index(['customer_id', 'issued_at'])
  })
  await knex.schema.dropTable('unit_dispositions')
  await knex.schema.dropTable('retest_policies')
  await knex.schema.dropTable('unit_returns')
  await knex.raw('ALTER TABLE shipment_units DROP INDEX shipment_units_live_unit_unique, DROP COLUMN live_unit_id')
  await knex.schema.alterTable('shipment_units', (t) => {
    t.dropForeign(['unit_id'])
    t.dropIndex(['unit_id'])
    t.dropColumn('added_at')
    t.dropColumn('returned_at')
  })
  await knex.schema.alterTable('shipment_units', (t) => {
    t.unique(['unit_id'])
    t.foreign('unit_id').references('units.id')
  })
  await knex.schema.alterTable('shipments', (t) => {
    t.dropIndex(['status', 'created_at'])
    t.dropForeign(['created_by'])
    t.dropForeign(['dispatched_by'])
    t.dropColumn('planned_ship_date')
    t.dropColumn('notes')
    t.dropColumn('created_by')
    t.dropColumn('dispatched_by')
    t.dropColumn('carrier')
    t.dropColumn('tracking_ref')
  })
  await knex.schema.alterTable('shipments', (t) => { t.renameColumn('dispatched_at', 'shipped_at') })
  await knex.raw("ALTER TABLE shipments MODIFY status ENUM('draft','released','shipped','dispatched') NOT NULL DEFAULT 'draft'")
  await knex('shipments').where({ status: 'dispatched' }).update({ status: 'shipped' })
  await knex.raw("ALTER TABLE shipments MODIFY status ENUM('draft','released','shipped') NOT NULL DEFAULT 'draft'")
  await knex.schema.alterTable('customers', (t) => {
    t.dropColumn('active')
    t.dropColumn('updated_at')
  })
}

import type { Knex } from 'knex'

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('shipments', (t) => {
    t.increments('id')
    t.string('code', 32).notNullable().unique()
    t.integer('customer_id').unsigned().notNullable().references('customers.id')
    t.enum('status', ['draft', 'released', 'shipped']).notNullable().defaultTo('draft')
    t.string('customer_po', 64)
    t.datetime('created_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
    t.datetime('released_at', { precision: 3 })
    t.integer('released_by').unsigned().references('users.id')
    t.datetime('shipped_at', { precision: 3 })
    t.index(['customer_id', 'created_at'])
  })
  await knex.schema.createTable('shipment_units', (t) => {
    t.integer('shipment_id').unsigned().notNullable().references('shipments.id').onDelete('CASCADE')
    t.integer('unit_id').unsigned().notNullable().references('units.id')
    t.primary(['shipment_id', 'unit_id'])
    t.unique(['unit_id'])
  })
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
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('certificates')
  await knex.schema.dropTable('shipment_units')
  await knex.schema.dropTable('shipments')
}

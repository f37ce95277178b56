import type { Knex } from 'knex'

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('customers', (t) => {
    t.increments('id')
    t.string('code', 32).notNullable().unique()
    t.string('name', 120).notNullable()
    t.datetime('created_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
  })
  await knex.schema.createTable('customer_contacts', (t) => {
    t.increments('id')
    t.integer('customer_id').unsigned().notNullable().references('customers.id').onDelete('CASCADE')
    t.string('name', 120).notNullable()
    t.string('email', 254).notNullable()
    t.string('phone', 40)
    t.string('function', 80)
    t.boolean('receives_certificates').notNullable().defaultTo(false)
    t.index(['customer_id'])
  })
  await knex.schema.createTable('users', (t) => {
    t.increments('id')
    t.string('email', 254).notNullable().unique()
    t.string('name', 120).notNullable()
    t.string('password_hash', 255).notNullable()
    t.enum('role', ['admin', 'quality', 'engineer', 'operator', 'customer']).notNullable()
    t.integer('customer_id').unsigned().references('customers.id')
    t.boolean('disabled').notNullable().defaultTo(false)
    t.datetime('last_sign_in_at', { precision: 3 })
    t.datetime('created_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
    t.datetime('updated_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('users')
  await knex.schema.dropTable('customer_contacts')
  await knex.schema.dropTable('customers')
}

import type { Knex } from 'knex'

export async function up(knex: Knex): Promise<void> {
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
  await knex.schema.createTable('audit_log', (t) => {
    t.bigIncrements('id')
    t.datetime('at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
    t.integer('user_id').unsigned().references('users.id')
    t.integer('station_id').unsigned().references('stations.id')
    t.string('action', 40).notNullable()
    t.string('entity', 40).notNullable()
    t.string('entity_id', 64).notNullable()
    t.json('before')
    t.json('after')
    t.index(['entity', 'entity_id'])
    t.index(['at'])
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('audit_log')
  await knex.schema.dropTable('alert_events')
  await knex.schema.dropTable('alert_rules')
}

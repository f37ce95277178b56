import type { Knex } from 'knex'

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('stations', (t) => {
    t.increments('id')
    t.string('name', 64).notNullable().unique()
    t.string('location', 120)
    t.string('description', 255)
    t.datetime('last_seen_at', { precision: 3 })
    t.datetime('created_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
  })
  await knex.schema.createTable('station_tokens', (t) => {
    t.increments('id')
    t.integer('station_id').unsigned().notNullable().references('stations.id')
    // SHA-256 of the token; the token itself is shown once and never stored
    t.specificType('token_hash', 'CHAR(64)').notNullable().unique()
    t.string('hint', 12).notNullable()
    t.integer('created_by').unsigned().references('users.id')
    t.datetime('created_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
    t.datetime('revoked_at', { precision: 3 })
    t.datetime('last_used_at', { precision: 3 })
    t.index(['station_id'])
    t.index(['hint'])
  })
  await knex.schema.createTable('instruments', (t) => {
    t.increments('id')
    t.integer('station_id').unsigned().notNullable().references('stations.id').onDelete('CASCADE')
    t.string('kind', 60).notNullable()
    t.string('model', 80).notNullable()
    t.string('serial', 64).notNullable()
    t.datetime('calibration_due', { precision: 3 }).notNullable()
    t.index(['station_id', 'calibration_due'])
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('instruments')
  await knex.schema.dropTable('station_tokens')
  await knex.schema.dropTable('stations')
}

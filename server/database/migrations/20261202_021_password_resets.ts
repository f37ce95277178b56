import type { Knex } from 'knex'

/** Links to set a forgotten password: only the SHA-256 of the token is kept; single use, short-lived. */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('password_resets', (t) => {
    t.increments('id')
    t.binary('token_hash', 32).notNullable().unique()
    t.integer('user_id').unsigned().notNullable().references('users.id')
    t.datetime('created_at', { precision: 3 }).notNullable()
    t.datetime('expires_at', { precision: 3 }).notNullable()
    t.datetime('used_at', { precision: 3 })
    t.string('requested_from', 80).notNullable()
    t.index(['user_id', 'used_at'])
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('password_resets')
}

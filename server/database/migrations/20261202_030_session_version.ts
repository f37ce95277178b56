import type { Knex } from 'knex'

/**
 * A per-user session version, sealed into every session cookie at sign-in and compared on every request: raising it
 * (password change or reset, disabling, signing out everywhere) ends every session sealed with an older value on
 * every app instance at once.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('users', (t) => {
    t.integer('session_version').unsigned().notNullable().defaultTo(0)
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('users', (t) => {
    t.dropColumn('session_version')
  })
}

import type { Knex } from 'knex'

/**
 * One counter per kind of cached data (station tokens, the catalogue of products and approved limits, lots). A change
 * raises its kind's counter in its own transaction; every app instance reads the counters (one primary-key range of a
 * few rows) before trusting what it cached, so a change made through one instance holds on every other at once.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('cache_versions', (t) => {
    t.string('domain', 32).primary()
    t.bigInteger('version').unsigned().notNullable().defaultTo(1)
  })
  await knex('cache_versions').insert([{ domain: 'catalogue', version: 1 }, { domain: 'lots', version: 1 }, { domain: 'tokens', version: 1 }])
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('cache_versions')
}

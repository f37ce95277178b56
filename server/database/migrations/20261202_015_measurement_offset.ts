import type { Knex } from 'knex'

// Where along a phase-noise sweep a value derived from it was found: the offset of the worst margin under the limit
// mask, stored beside the margin itself.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('measurements', (t) => {
    t.double('at_offset_hz')
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('measurements', (t) => {
    t.dropColumn('at_offset_hz')
  })
}

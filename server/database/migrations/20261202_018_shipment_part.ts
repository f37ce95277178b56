import type { Knex } from 'knex'

/** A shipment may be restricted to one part: every unit added must be of it. */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('shipments', (t) => {
    t.integer('product_id').unsigned().references('products.id')
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('shipments', (t) => {
    t.dropForeign(['product_id'])
    t.dropColumn('product_id')
  })
}

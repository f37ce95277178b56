import type { Knex } from 'knex'

/**
 * Engineering and trial lots: a product may name the lot codes that are engineering builds (a pattern list, applied
 * when a lot is first seen), and a lot carries the mark and where it came from (the pattern or a person).
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('products', (t) => {
    t.string('engineering_lot_pattern', 200)
  })
  await knex.schema.alterTable('lots', (t) => {
    t.boolean('engineering').notNullable().defaultTo(false)
    t.enum('engineering_source', ['pattern', 'hand'])
    // the alert windows read a product's newest production lots
    t.index(['product_id', 'engineering', 'created_at'], 'lots_product_kind_idx')
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('lots', (t) => {
    t.dropIndex(['product_id', 'engineering', 'created_at'], 'lots_product_kind_idx')
    t.dropColumn('engineering_source')
    t.dropColumn('engineering')
  })
  await knex.schema.alterTable('products', (t) => { t.dropColumn('engineering_lot_pattern') })
}

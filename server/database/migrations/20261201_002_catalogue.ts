import type { Knex } from 'knex'

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('products', (t) => {
    t.increments('id')
    t.string('part_number', 40).notNullable().unique()
    t.string('name', 120).notNullable()
    t.integer('multiplier').unsigned().notNullable()
    t.double('input_hz').notNullable()
    t.double('output_hz').notNullable()
    // ordered list of test steps, e.g. ["tune","burn-in","final"]
    t.json('steps').notNullable()
    t.double('jitter_band_lo_hz').notNullable().defaultTo(1e3)
    t.double('jitter_band_hi_hz').notNullable().defaultTo(1e6)
    t.datetime('created_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
    t.datetime('updated_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
  })
  await knex.schema.createTable('spec_revisions', (t) => {
    t.increments('id')
    t.integer('product_id').unsigned().notNullable().references('products.id')
    t.integer('revision').unsigned().notNullable()
    t.enum('status', ['draft', 'approved', 'superseded']).notNullable().defaultTo('draft')
    t.datetime('effective_at', { precision: 3 })
    t.integer('author_id').unsigned().references('users.id')
    t.integer('approved_by').unsigned().references('users.id')
    t.datetime('approved_at', { precision: 3 })
    t.string('note', 500)
    t.datetime('created_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
    t.unique(['product_id', 'revision'])
    t.index(['product_id', 'status', 'effective_at'])
  })
  await knex.schema.createTable('spec_limits', (t) => {
    t.increments('id')
    t.integer('revision_id').unsigned().notNullable().references('spec_revisions.id').onDelete('CASCADE')
    t.string('step', 24).notNullable()
    t.string('name', 48).notNullable()
    // offset in Hz or harmonic number; 0 when the name takes no qualifier
    t.double('qualifier').notNullable().defaultTo(0)
    t.double('lsl')
    t.double('usl')
    t.double('target')
    t.string('unit', 16).notNullable()
    t.boolean('required').notNullable().defaultTo(true)
    t.enum('rule', ['simple', 'guarded']).notNullable().defaultTo('simple')
    t.double('default_uncertainty')
    t.boolean('key_characteristic').notNullable().defaultTo(false)
    t.unique(['revision_id', 'step', 'name', 'qualifier'])
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('spec_limits')
  await knex.schema.dropTable('spec_revisions')
  await knex.schema.dropTable('products')
}

import type { Knex } from 'knex'

// An engineer can freeze a parameter's control limits; otherwise they come from the lot's first 25 points.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('control_baselines', (t) => {
    t.integer('lot_id').unsigned().notNullable().references('lots.id')
    t.string('step', 24).notNullable()
    t.string('name', 48).notNullable()
    t.double('qualifier').notNullable()
    t.double('centre').notNullable()
    t.double('sigma').notNullable()
    t.integer('n').notNullable()
    t.integer('set_by').unsigned().references('users.id')
    t.datetime('set_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
    t.primary(['lot_id', 'step', 'name', 'qualifier'])
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('control_baselines')
}

import type { Knex } from 'knex'

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('import_jobs', (t) => {
    t.specificType('id', 'CHAR(36)').primary()
    t.integer('created_by').unsigned().notNullable().references('users.id')
    t.integer('station_id').unsigned().notNullable().references('stations.id')
    t.string('file_name', 255).notNullable()
    t.enum('format', ['jsonl', 'csv']).notNullable()
    t.enum('status', ['running', 'done', 'failed']).notNullable().defaultTo('running')
    t.integer('lines_total').unsigned()
    t.integer('lines_done').unsigned().notNullable().defaultTo(0)
    t.integer('runs_done').unsigned().notNullable().defaultTo(0)
    t.integer('runs_created').unsigned().notNullable().defaultTo(0)
    t.integer('runs_replayed').unsigned().notNullable().defaultTo(0)
    t.integer('runs_rejected').unsigned().notNullable().defaultTo(0)
    t.datetime('started_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
    // moves with every progress write, so a job left behind by a stopped server shows as stalled
    t.datetime('updated_at', { precision: 3 }).notNullable().defaultTo(knex.fn.now(3))
    t.datetime('finished_at', { precision: 3 })
    t.string('error', 500)
    t.index(['started_at'])
  })
  await knex.schema.createTable('import_rejections', (t) => {
    t.bigIncrements('id')
    t.specificType('job_id', 'CHAR(36)').notNullable().references('import_jobs.id').onDelete('CASCADE')
    t.integer('line_number').unsigned().notNullable()
    t.string('run_id', 64)
    t.smallint('status').unsigned().notNullable()
    t.string('reason', 1000).notNullable()
    t.index(['job_id', 'id'])
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('import_rejections')
  await knex.schema.dropTable('import_jobs')
}

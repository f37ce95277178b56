import type { Knex } from 'knex'

// An import can be cancelled: the request is kept on the job until its worker sees it and stops; a job whose worker
// is gone (a stopped server) is marked cancelled at once.
export async function up(knex: Knex): Promise<void> {
  await knex.raw("ALTER TABLE import_jobs MODIFY status ENUM('running', 'done', 'failed', 'cancelled') NOT NULL DEFAULT 'running'")
  await knex.schema.alterTable('import_jobs', (t) => {
    t.datetime('cancel_requested_at', { precision: 3 })
    t.integer('cancelled_by').unsigned().references('users.id')
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('import_jobs', (t) => {
    t.dropForeign(['cancelled_by'])
    t.dropColumn('cancelled_by')
    t.dropColumn('cancel_requested_at')
  })
  await knex.raw("UPDATE import_jobs SET status = 'failed' WHERE status = 'cancelled'")
  await knex.raw("ALTER TABLE import_jobs MODIFY status ENUM('running', 'done', 'failed') NOT NULL DEFAULT 'running'")
}

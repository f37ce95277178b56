import type { Knex } from 'knex'

// An import keeps its upload in the database, in slices of about 1 MiB written as the file arrives, so any app
// instance can carry on with it after the one that accepted it stopped. The job records the upload's size, SHA-256
// and when it was received whole; `lines_done` is the line cursor a resumed run starts after.
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('import_upload_chunks', (t) => {
    t.specificType('import_id', 'CHAR(36)').notNullable().references('import_jobs.id').onDelete('CASCADE')
    t.integer('seq').unsigned().notNullable()
    t.specificType('bytes', 'MEDIUMBLOB').notNullable()
    t.primary(['import_id', 'seq'])
  })
  await knex.schema.alterTable('import_jobs', (t) => {
    t.bigInteger('upload_bytes').unsigned()
    t.specificType('upload_sha256', 'CHAR(64)')
    t.integer('upload_chunks').unsigned()
    // null while the file is still arriving: such a job is not listed, and one left behind is removed
    t.datetime('received_at', { precision: 3 })
    t.integer('resumes').unsigned().notNullable().defaultTo(0)
  })
  // jobs from before kept their file elsewhere: they count as received, and without a stored upload none is resumed
  await knex.raw('UPDATE import_jobs SET received_at = started_at')
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('import_upload_chunks')
  await knex.raw('DELETE FROM import_jobs WHERE received_at IS NULL')
  await knex.schema.alterTable('import_jobs', (t) => {
    t.dropColumn('resumes')
    t.dropColumn('received_at')
    t.dropColumn('upload_chunks')
    t.dropColumn('upload_sha256')
    t.dropColumn('upload_bytes')
  })
}

import type { Knex } from 'knex'

/**
 * A draft can be submitted for approval (when, by whom, a note, optionally to a named quality reviewer)
 * and discarded: a discarded revision stays, never deleted, and never changes again.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.raw("ALTER TABLE spec_revisions MODIFY status ENUM('draft','approved','superseded','discarded') NOT NULL DEFAULT 'draft'")
  await knex.schema.alterTable('spec_revisions', (t) => {
    t.datetime('submitted_at', { precision: 3 })
    t.integer('submitted_by').unsigned().references('users.id')
    t.string('submit_note', 500)
    t.integer('reviewer_id').unsigned().references('users.id')
    t.datetime('discarded_at', { precision: 3 })
    t.integer('discarded_by').unsigned().references('users.id')
    t.string('discard_note', 500)
  })
}

export async function down(knex: Knex): Promise<void> {
  const n = Number((await knex('spec_revisions').where({ status: 'discarded' }).count({ n: '*' }))[0]?.n ?? 0)
  if (n) throw new Error(`${n} discarded revision(s) exist; the earlier schema has no place for them.`)
  await knex.schema.alterTable('spec_revisions', (t) => {
    t.dropForeign(['submitted_by'])
    t.dropForeign(['reviewer_id'])
    t.dropForeign(['discarded_by'])
    t.dropColumn('submitted_at'); t.dropColumn('submitted_by'); t.dropColumn('submit_note'); t.dropColumn('reviewer_id')
    t.dropColumn('discarded_at'); t.dropColumn('discarded_by'); t.dropColumn('discard_note')
  })
  await knex.raw("ALTER TABLE spec_revisions MODIFY status ENUM('draft','approved','superseded') NOT NULL DEFAULT 'draft'")
}

import type { Knex } from 'knex'

/**
 * Outgoing e-mail, written in the transaction of the event it tells about and sent later by the mail sender.
 * `message_id` is fixed at enqueue so a resend after a lost "sent" mark carries the same RFC 5322 Message-ID.
 */
export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('mail_outbox', (t) => {
    t.bigIncrements('id').primary()
    t.string('message_id', 190).notNullable().unique()
    t.string('template', 64).notNullable()
    t.json('to').notNullable()
    t.string('subject', 300).notNullable()
    t.text('text', 'mediumtext').notNullable()
    t.text('html', 'mediumtext').notNullable()
    t.enu('status', ['queued', 'sending', 'sent', 'failed']).notNullable().defaultTo('queued')
    t.integer('attempts').unsigned().notNullable().defaultTo(0)
    t.text('last_error')
    t.specificType('next_try_at', 'DATETIME(3)').notNullable()
    t.string('lease_owner', 64)
    t.specificType('lease_until', 'DATETIME(3)')
    t.specificType('created_at', 'DATETIME(3)').notNullable()
    t.specificType('sent_at', 'DATETIME(3)')
    t.index(['status', 'next_try_at'], 'mail_outbox_due')
    t.index(['status', 'lease_until'], 'mail_outbox_lease')
  })
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTable('mail_outbox')
}

import { randomBytes } from 'node:crypto'
import type { Knex } from 'knex'

export type OutgoingMail = { to: string[]; template: string; subject: string; text: string; html: string }

/** The domain part of generated Message-IDs: the sender address's domain, else a fixed local one. */
export function messageIdDomain(env: NodeJS.ProcessEnv = process.env): string {
  const from = env.TERCET_MAIL_FROM || ''
  const m = /@([A-Za-z0-9.-]+)>?\s*$/.exec(from)
  return m ? m[1]!.toLowerCase() : 'tercet.invalid'
}

/** An RFC 5322 msg-id: `<random@domain>`, fixed when the message is queued. */
export function newMessageId(domain = messageIdDomain()): string {
  return `<${randomBytes(16).toString('hex')}.tercet@${domain}>`
}

/**
 * Queues one message in the caller's transaction, so it exists exactly when the event it tells about committed; the
 * mail sender delivers it afterwards. Returns the outbox id.
 */
export async function enqueueMail(trx: Knex | Knex.Transaction, m: OutgoingMail, now = new Date()): Promise<number> {
  const to = [...new Set(m.to.map((a) => a.trim()).filter(Boolean))]
  if (!to.length) throw new Error('enqueueMail: no recipients')
  const [id] = await trx('mail_outbox').insert({
    message_id: newMessageId(), template: m.template, to: JSON.stringify(to), subject: m.subject, text: m.text, html: m.html,
    status: 'queued', attempts: 0, next_try_at: now, created_at: now,
  })
  return Number(id)
}

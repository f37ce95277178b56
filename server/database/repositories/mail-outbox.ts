import type { Knex } from 'knex'
import { writeTransaction } from '../write-retries'

export type LeasedMail = { id: number; messageId: string; to: string[]; subject: string; text: string; html: string; attempts: number; resend: boolean }

const toList = (v: unknown): string[] => (typeof v === 'string' ? JSON.parse(v) : (v as string[]))

/**
 * Leases up to `limit` messages that are due: queued ones whose next try has come, and ones left `sending` whose
 * lease ran out (the sender died between sending and marking). Locked rows are skipped, so concurrent senders take
 * different messages; each taken row is written `sending` with this owner and a lease, in one short transaction.
 * An expired lease counts as an attempt, so a message that keeps killing its sender ends failed like any other.
 */
export async function leaseDueMail(db: Knex, owner: string, now: Date, leaseMs: number, limit: number, maxAttempts: number): Promise<LeasedMail[]> {
  return writeTransaction(db, async (trx) => {
    const due = await trx('mail_outbox')
      .where((q) => q.where({ status: 'queued' }).andWhere('next_try_at', '<=', now))
      .orWhere((q) => q.where({ status: 'sending' }).andWhere('lease_until', '<', now))
      .orderBy('next_try_at').orderBy('id').limit(limit).forUpdate().skipLocked()
      .select('id', 'message_id', 'to', 'subject', 'text', 'html', 'attempts', 'status')
    if (!due.length) return []
    const out: LeasedMail[] = []
    const until = new Date(now.getTime() + leaseMs)
    for (const r of due) {
      const resend = r.status === 'sending'
      const attempts = r.attempts + (resend ? 1 : 0)
      if (resend && attempts >= maxAttempts) {
        await trx('mail_outbox').where({ id: r.id }).update({ status: 'failed', attempts, lease_owner: null, lease_until: null, last_error: 'the sender stopped while sending, too many times' })
        continue
      }
      await trx('mail_outbox').where({ id: r.id }).update({
        status: 'sending', attempts, lease_owner: owner, lease_until: until,
        ...(resend ? { last_error: 'the lease ran out while sending; sent again with the same Message-ID' } : {}),
      })
      out.push({ id: r.id, messageId: r.message_id, to: toList(r.to), subject: r.subject, text: r.text, html: r.html, attempts, resend })
    }
    return out
  })
}

/** Marks a message sent, only while this owner still holds its lease. */
export async function markMailSent(db: Knex, id: number, owner: string, now: Date): Promise<boolean> {
  const n = await db('mail_outbox').where({ id, status: 'sending', lease_owner: owner }).update({ status: 'sent', sent_at: now, lease_owner: null, lease_until: null })
  return n === 1
}

/** Records a failed try: attempts + 1, the error, and either the next try or `failed` when no tries are left. */
export async function markMailFailed(db: Knex, id: number, owner: string, error: string, attempts: number, nextTryAt: Date | null): Promise<boolean> {
  const n = await db('mail_outbox').where({ id, status: 'sending', lease_owner: owner }).update({
    status: nextTryAt ? 'queued' : 'failed', attempts, last_error: error.slice(0, 2000), next_try_at: nextTryAt ?? db.ref('next_try_at'),
    lease_owner: null, lease_until: null,
  })
  return n === 1
}

export type OutboxRow = {
  id: number; messageId: string; template: string; to: string[]; subject: string; status: string; attempts: number
  lastError: string | null; nextTryAt: Date; createdAt: Date; sentAt: Date | null
}

export async function listOutbox(db: Knex, limit: number): Promise<OutboxRow[]> {
  const rows = await db('mail_outbox').orderBy('id', 'desc').limit(limit)
    .select('id', 'message_id', 'template', 'to', 'subject', 'status', 'attempts', 'last_error', 'next_try_at', 'created_at', 'sent_at')
  return rows.map((r: any) => ({
    id: r.id, messageId: r.message_id, template: r.template, to: toList(r.to), subject: r.subject, status: r.status, attempts: r.attempts,
    lastError: r.last_error ?? null, nextTryAt: r.next_try_at, createdAt: r.created_at, sentAt: r.sent_at ?? null,
  }))
}

export async function countOutbox(db: Knex): Promise<Record<string, number>> {
  const rows = await db('mail_outbox').groupBy('status').select('status').count({ n: '*' })
  return Object.fromEntries(rows.map((r: any) => [r.status, Number(r.n)]))
}

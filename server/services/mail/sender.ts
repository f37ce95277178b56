import { hostname } from 'node:os'
import { randomBytes } from 'node:crypto'
import type { Knex } from 'knex'
import { isDatabaseUnavailable } from '../../utils/database-unavailable'
import { leaseDueMail, markMailFailed, markMailSent, type LeasedMail } from '../../database/repositories/mail-outbox'

/** Delivers one message; throws when the relay refuses it or cannot be reached. */
export type Deliver = (m: LeasedMail) => Promise<void>

export type SenderPolicy = { leaseMs: number; batch: number; maxAttempts: number; backoffBaseMs: number; backoffCapMs: number }

export function senderPolicy(env: NodeJS.ProcessEnv = process.env): SenderPolicy {
  return {
    // longer than nodemailer's connection + socket timeouts below, so a live sender never loses a lease mid-send
    leaseMs: Number(env.TERCET_MAIL_LEASE_MS || 120_000),
    batch: 20,
    maxAttempts: Number(env.TERCET_MAIL_MAX_ATTEMPTS || 8),
    backoffBaseMs: Number(env.TERCET_MAIL_BACKOFF_MS || 30_000),
    backoffCapMs: 3_600_000,
  }
}

/** Wait before try number `attempts + 1`: base · 2^(attempts − 1), at most the cap. */
export function mailBackoffMs(attempts: number, p: Pick<SenderPolicy, 'backoffBaseMs' | 'backoffCapMs'>): number {
  return Math.min(p.backoffCapMs, p.backoffBaseMs * 2 ** Math.max(0, attempts - 1))
}

export const senderId = (): string => `${hostname()}:${process.pid}:${randomBytes(3).toString('hex')}`

/**
 * One pass of the mail sender: lease due messages (short transaction), deliver each outside any transaction, mark it
 * sent or record the failure with backoff. Delivery is at least once: a sender that dies after the relay accepted a
 * message but before marking it leaves it `sending`; when its lease runs out the next pass sends it again, once per
 * expired lease, with the same Message-ID so receiving systems can tell the copies apart.
 */
export async function sendDueMail(db: Knex, deliver: Deliver, owner: string, policy: SenderPolicy, clock = () => new Date()): Promise<{ sent: number; failed: number }> {
  const leased = await leaseDueMail(db, owner, clock(), policy.leaseMs, policy.batch, policy.maxAttempts)
  let sent = 0
  let failed = 0
  for (const m of leased) {
    try {
      await deliver(m)
    } catch (e: any) {
      failed++
      const attempts = m.attempts + 1
      const next = attempts >= policy.maxAttempts ? null : new Date(clock().getTime() + mailBackoffMs(attempts, policy))
      await markMailFailed(db, m.id, owner, String(e?.message ?? e), attempts, next)
      continue
    }
    if (await markSentOutlastingOutage(() => markMailSent(db, m.id, owner, clock()), policy.leaseMs)) sent++
  }
  return { sent, failed }
}

/**
 * The relay took the message; if the database is away just then, marking it sent is tried again for most of the
 * lease rather than given up, so an outage of a few seconds does not leave it to be sent a second time.
 */
async function markSentOutlastingOutage(mark: () => Promise<boolean>, leaseMs: number): Promise<boolean> {
  const until = Date.now() + leaseMs * 0.8
  for (let wait = 250; ; wait = Math.min(wait * 2, 4000)) {
    try {
      return await mark()
    } catch (e) {
      if (!isDatabaseUnavailable(e) || Date.now() + wait > until) throw e
      await new Promise((r) => setTimeout(r, wait))
    }
  }
}

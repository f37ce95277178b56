import type { Knex } from 'knex'
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { migrationSource } from '../../server/database/migration-source'
import { leaseDueMail, type LeasedMail } from '../../server/database/repositories/mail-outbox'
import { enqueueMail } from '../../server/services/mail/outbox'
import { mailBackoffMs, sendDueMail, type SenderPolicy } from '../../server/services/mail/sender'

// its own database, so the test server's sender never takes these messages and this test never takes its
const dbName = `${connectionFromEnv().database}_mail`
let admin: Knex
let db: Knex
const policy: SenderPolicy = { leaseMs: 60_000, batch: 20, maxAttempts: 4, backoffBaseMs: 10_000, backoffCapMs: 30_000 }
const t0 = new Date('2026-12-02T08:00:00.000Z')
const at = (ms: number) => () => new Date(t0.getTime() + ms)
const row = (id: number) => db('mail_outbox').where({ id }).first()
const queue = (n = 1) => Promise.all(Array.from({ length: n }, (_, i) => enqueueMail(db, { to: [`r${i}@example.test`], template: 'test', subject: `s${i}`, text: 't', html: 'h' }, t0)))

function recorder(fail = false) {
  const got: LeasedMail[] = []
  return { got, deliver: async (m: LeasedMail) => { got.push(m); if (fail) throw new Error('connect ECONNREFUSED 127.0.0.1:1') } }
}

beforeAll(async () => {
  admin = createKnex(connectionFromEnv())
  await admin.raw(`DROP DATABASE IF EXISTS \`${dbName}\``)
  await admin.raw(`CREATE DATABASE \`${dbName}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci`)
  db = createKnex({ ...connectionFromEnv(), database: dbName }, { min: 0, max: 6 })
  await db.migrate.latest({ migrationSource })
})
beforeEach(async () => { await db('mail_outbox').delete() })
afterAll(async () => {
  await db.destroy()
  await admin.raw(`DROP DATABASE IF EXISTS \`${dbName}\``)
  await admin.destroy()
})

describe('the mail sender', () => {
  it('sends a due message once and marks it sent; a later pass sends nothing', async () => {
    const [id] = await queue()
    const r = recorder()
    expect(await sendDueMail(db, r.deliver, 'a', policy, at(0))).toEqual({ sent: 1, failed: 0 })
    expect(await sendDueMail(db, r.deliver, 'a', policy, at(1000))).toEqual({ sent: 0, failed: 0 })
    expect(r.got.map((m) => m.id)).toEqual([id])
    const s = await row(id!)
    expect(s.status).toBe('sent')
    expect(s.sent_at.getTime()).toBe(t0.getTime())
    expect(s.lease_owner).toBeNull()
  })

  it('backs off exponentially after failures, up to the cap, and gives up after the last attempt', async () => {
    const [id] = await queue()
    const bad = recorder(true)
    // doubling from the base, capped: 10 s, 20 s, 30 s (cap)
    expect([1, 2, 3, 4].map((a) => mailBackoffMs(a, policy))).toEqual([10_000, 20_000, 30_000, 30_000])
    let clock = 0
    for (const [attempt, wait] of [[1, 10_000], [2, 20_000], [3, 30_000]] as const) {
      await sendDueMail(db, bad.deliver, 'a', policy, at(clock))
      const s = await row(id!)
      expect(s.status).toBe('queued')
      expect(s.attempts).toBe(attempt)
      expect(s.last_error).toMatch(/ECONNREFUSED/)
      expect(s.next_try_at.getTime()).toBe(t0.getTime() + clock + wait)
      // not due a millisecond early
      expect(await sendDueMail(db, bad.deliver, 'a', policy, at(clock + wait - 1))).toEqual({ sent: 0, failed: 0 })
      clock += wait
    }
    await sendDueMail(db, bad.deliver, 'a', policy, at(clock))
    expect((await row(id!)).status).toBe('failed')
    expect((await row(id!)).attempts).toBe(4)
    expect(bad.got).toHaveLength(4)
    expect(await sendDueMail(db, recorder().deliver, 'a', policy, at(clock + 10_000_000))).toEqual({ sent: 0, failed: 0 })
  })

  it('resends a message whose lease ran out while sending, with the same Message-ID, once per expired lease', async () => {
    const [id] = await queue()
    // a sender that delivered and died before marking leaves the row `sending` under its lease
    const dead = recorder()
    const [first] = await leaseDueMail(db, 'dead', t0, policy.leaseMs, 20, policy.maxAttempts)
    await dead.deliver(first!)
    const live = recorder()
    // within the lease nobody else sends it
    expect(await sendDueMail(db, live.deliver, 'live', policy, at(policy.leaseMs - 1))).toEqual({ sent: 0, failed: 0 })
    // two senders after expiry: exactly one of them resends it
    const other = recorder()
    const [x, y] = await Promise.all([
      sendDueMail(db, live.deliver, 'live', policy, at(policy.leaseMs + 1)),
      sendDueMail(db, other.deliver, 'other', policy, at(policy.leaseMs + 1)),
    ])
    expect(x.sent + y.sent).toBe(1)
    const copies = [...live.got, ...other.got]
    expect(copies).toHaveLength(1)
    expect(copies[0]!.messageId).toBe(dead.got[0]!.messageId)
    expect(copies[0]!.resend).toBe(true)
    const s = await row(id!)
    expect(s.status).toBe('sent')
    expect(s.attempts).toBe(1)
    expect(s.last_error).toMatch(/same Message-ID/)
  })

  it('a sender whose lease was taken over cannot mark the message', async () => {
    const [id] = await queue()
    let late: Promise<unknown> | undefined
    const slow = async () => {
      // while this sender is still sending, its lease runs out and another sender takes and sends the message
      late = sendDueMail(db, recorder().deliver, 'b', policy, at(policy.leaseMs + 5))
      await late
    }
    await sendDueMail(db, slow, 'a', policy, at(0))
    await late
    const s = await row(id!)
    expect(s.status).toBe('sent')
    expect(s.attempts).toBe(1)
  })

  it('leases distinct messages to concurrent senders, each delivered once', async () => {
    const ids = await queue(30)
    const a = recorder(), b = recorder()
    await Promise.all([sendDueMail(db, a.deliver, 'a', { ...policy, batch: 30 }, at(0)), sendDueMail(db, b.deliver, 'b', { ...policy, batch: 30 }, at(0))])
    await sendDueMail(db, a.deliver, 'a', { ...policy, batch: 30 }, at(0))
    const all = [...a.got, ...b.got].map((m) => m.id).sort((p, q) => p - q)
    expect(all).toEqual([...ids].sort((p, q) => p - q))
    expect(Number((await db('mail_outbox').where({ status: 'sent' }).count({ n: '*' }).first() as any).n)).toBe(30)
  })

  it('a message that keeps killing its sender ends failed, unsent, once its attempts are used up', async () => {
    const [id] = await queue()
    await db('mail_outbox').where({ id }).update({ status: 'sending', lease_owner: 'dead', lease_until: t0, attempts: policy.maxAttempts - 1 })
    const r = recorder()
    expect(await sendDueMail(db, r.deliver, 'x', policy, at(1))).toEqual({ sent: 0, failed: 0 })
    expect(r.got).toHaveLength(0)
    const s = await row(id!)
    expect(s.status).toBe('failed')
    expect(s.attempts).toBe(policy.maxAttempts)
    expect(s.last_error).toMatch(/stopped while sending/)
  })
})

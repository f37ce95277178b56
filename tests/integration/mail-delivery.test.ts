// The sender over real SMTP to the local mail catcher: the catcher down, then up, and every message arrives once.
import { mkdtempSync, readdirSync, readFileSync } from 'node:fs'
import net from 'node:net'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startMailFake } from '../../scripts/lib/mail-fake.mjs'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { migrationSource } from '../../server/database/migration-source'
import { enqueueMail } from '../../server/services/mail/outbox'
import { sendDueMail, type SenderPolicy } from '../../server/services/mail/sender'
import { smtpDeliver } from '../../server/services/mail/transport'
import { shipmentReleased } from '../../server/services/mail/templates'

// its own database, so the test server's sender never takes these messages
const dbName = `${connectionFromEnv().database}_maildelivery`
let admin: Knex
let db: Knex
const policy: SenderPolicy = { leaseMs: 60_000, batch: 20, maxAttempts: 6, backoffBaseMs: 200, backoffCapMs: 400 }

const freePort = () => new Promise<number>((done) => { const s = net.createServer().listen(0, '127.0.0.1', () => { const p = (s.address() as net.AddressInfo).port; s.close(() => done(p)) }) })
const received = (dir: string) => readdirSync(dir).filter((n) => n.endsWith('.json')).map((n) => JSON.parse(readFileSync(join(dir, n), 'utf8')))

beforeAll(async () => {
  admin = createKnex(connectionFromEnv())
  await admin.raw(`DROP DATABASE IF EXISTS \`${dbName}\``)
  await admin.raw(`CREATE DATABASE \`${dbName}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci`)
  db = createKnex({ ...connectionFromEnv(), database: dbName }, { min: 0, max: 4 })
  await db.migrate.latest({ migrationSource })
})
afterAll(async () => {
  await db.destroy()
  await admin.raw(`DROP DATABASE IF EXISTS \`${dbName}\``)
  await admin.destroy()
})

describe('delivery over SMTP', () => {
  it('keeps messages queued while the catcher is down and delivers each exactly once when it is back', async () => {
    const port = await freePort()
    const dir = mkdtempSync(join(tmpdir(), 'tercet-mail-'))
    const deliver = smtpDeliver({ host: '127.0.0.1', port, secure: false, from: 'Tercet <tercet@vellmar.example>' })
    const env = { NUXT_PUBLIC_SITE_URL: 'https://tercet.vellmar.example' } as NodeJS.ProcessEnv
    const ids: number[] = []
    for (let i = 1; i <= 3; i++) {
      const m = shipmentReleased({ shipmentId: 900 + i, code: `SHP-2026-0090${i}`, customerName: 'Saltmarsh Ground Systems', po: `SGS-${i}`, units: i, makerName: 'Vellmar Frequency Works' }, env)
      ids.push(await enqueueMail(db, { to: [`buyer${i}@saltmarsh.example`, 'quality@saltmarsh.example'], template: 'shipmentReleased', ...m }))
    }

    // nothing listens: every message fails its first try, is queued again with the error and a next try
    expect(await sendDueMail(db, deliver, 'd', policy)).toEqual({ sent: 0, failed: 3 })
    const down = await db('mail_outbox').whereIn('id', ids)
    expect(down.map((r: any) => [r.status, r.attempts])).toEqual([['queued', 1], ['queued', 1], ['queued', 1]])
    expect(down[0].last_error).toMatch(/ECONNREFUSED/)

    const fake = await startMailFake({ port, dir })
    try {
      const deadline = Date.now() + 20_000
      while ((await db('mail_outbox').whereIn('id', ids).where({ status: 'sent' })).length < 3) {
        if (Date.now() > deadline) throw new Error('messages not delivered within 20 s')
        await sendDueMail(db, deliver, 'd', policy)
        await new Promise((r) => setTimeout(r, 100))
      }
      // more passes send nothing again
      expect(await sendDueMail(db, deliver, 'd', policy)).toEqual({ sent: 0, failed: 0 })
    } finally { await fake.close() }

    const rows = await db('mail_outbox').whereIn('id', ids).orderBy('id')
    const got = received(dir)
    expect(got).toHaveLength(3)
    for (const [i, r] of rows.entries()) {
      const copies = got.filter((g: any) => g.messageId === r.message_id)
      expect(copies).toHaveLength(1)
      const g = copies[0]
      expect(g.to.sort()).toEqual([`buyer${i + 1}@saltmarsh.example`, 'quality@saltmarsh.example'].sort())
      expect(g.from).toBe('tercet@vellmar.example')
      expect(g.subject).toBe(r.subject)
      expect(g.text).toContain(`SHP-2026-0090${i + 1}`)
      expect(g.html).toContain(`SHP-2026-0090${i + 1}`)
      expect(g.links).toEqual([`https://tercet.vellmar.example/portal/shipments/${901 + i}`])
      expect(r.attempts).toBeGreaterThanOrEqual(1)
    }
  })

  it('a message sent by a sender that died before marking it goes again with the same Message-ID after its lease', async () => {
    const fakeDir = mkdtempSync(join(tmpdir(), 'tercet-mail-'))
    const fake = await startMailFake({ port: 0, dir: fakeDir })
    try {
      const deliver = smtpDeliver({ host: '127.0.0.1', port: fake.port, secure: false, from: 'Tercet <tercet@vellmar.example>' })
      const id = await enqueueMail(db, { to: ['night@saltmarsh.example'], template: 'test', subject: 'lease test', text: 'body', html: '<p>body</p>' })
      // the first sender delivers and dies before its mark: its lease is left to run out
      const crash = new Error('sender killed')
      await expect(sendDueMail(db, async (m) => { await deliver(m); throw crash }, 'dies', { ...policy, leaseMs: 300, maxAttempts: 9 }).then(async () => {
        // (a thrown delivery is recorded as a failure; put the row back as a crash leaves it)
        await db('mail_outbox').where({ id }).update({ status: 'sending', lease_owner: 'dies', lease_until: new Date(Date.now() + 300) })
      })).resolves.toBeUndefined()
      expect(await sendDueMail(db, deliver, 'next', policy)).toEqual({ sent: 0, failed: 0 })
      await new Promise((r) => setTimeout(r, 400))
      expect(await sendDueMail(db, deliver, 'next', policy)).toEqual({ sent: 1, failed: 0 })
      expect(await sendDueMail(db, deliver, 'next', policy)).toEqual({ sent: 0, failed: 0 })
      const row = await db('mail_outbox').where({ id }).first()
      const copies = received(fakeDir).filter((g: any) => g.subject === 'lease test')
      expect(copies).toHaveLength(2)
      expect(copies.every((c: any) => c.messageId === row.message_id)).toBe(true)
      expect(row.status).toBe('sent')
    } finally { await fake.close() }
  })
})

import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { enqueueMail } from '../../server/services/mail/outbox'

let db: Knex
const tag = `MO${Date.now().toString(36)}`
const mail = (n: string) => ({ to: [`${tag}-${n}@example.test`, ` ${tag}-${n}@example.test `], template: 'test', subject: `${tag} ${n}`, text: 't', html: '<p>h</p>' })

beforeAll(() => { db = createKnex(connectionFromEnv(), { min: 0, max: 4 }) })
afterAll(async () => {
  await db('mail_outbox').where('subject', 'like', `${tag}%`).delete()
  await db.destroy()
})

describe('the outbox', () => {
  it('keeps a message queued in a transaction that commits, with a Message-ID and its recipients once each', async () => {
    const id = await db.transaction((trx) => enqueueMail(trx, mail('a')))
    const r = await db('mail_outbox').where({ id }).first()
    expect(r.status).toBe('queued')
    expect(r.attempts).toBe(0)
    expect(typeof r.to === 'string' ? JSON.parse(r.to) : r.to).toEqual([`${tag}-a@example.test`])
    expect(r.message_id).toMatch(/^<[^@<>\s]+@[^@<>\s]+>$/)
    expect(r.next_try_at.getTime()).toBeLessThanOrEqual(Date.now() + 1000)
  })

  it('leaves nothing behind when the transaction that queued it rolls back', async () => {
    await expect(db.transaction(async (trx) => { await enqueueMail(trx, mail('b')); throw new Error('event refused') })).rejects.toThrow('event refused')
    expect(await db('mail_outbox').where({ subject: `${tag} b` }).first()).toBeUndefined()
  })

  it('refuses a message with no recipients', async () => {
    await expect(enqueueMail(db, { ...mail('c'), to: [' '] })).rejects.toThrow(/no recipients/)
  })
})

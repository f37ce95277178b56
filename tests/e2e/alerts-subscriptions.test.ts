// One's own subscriptions: following a rule, a product or a station; following again answers the same subscription.
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { call, signIn, ROLE_ACCOUNTS } from '../support/http'
import { makePart } from '../support/shipping'
import { newRule, newStation, productId, watcher } from '../support/alerts'

const tag = Date.now().toString(36).toUpperCase()
const P = `AS-${tag}`.slice(0, 30)
let db: Knex
let admin = ''
let engineer = ''

beforeAll(async () => {
  db = createKnex(connectionFromEnv(), { min: 0, max: 2 })
  admin = await signIn(ROLE_ACCOUNTS.admin)
  engineer = await signIn(ROLE_ACCOUNTS.engineer)
  await makePart(P)
})
afterAll(async () => { await db.destroy() })

const mine = (cookie: string) => call('GET', '/api/me/alert-subscriptions', { cookie }).then((r) => r.body.subscriptions as any[])
const follow = (cookie: string, body: unknown) => call('POST', '/api/me/alert-subscriptions', { cookie, body })

describe('subscriptions', () => {
  it('follows a rule, a product and a station, each listed with a label', async () => {
    const me = await watcher(admin, `as-${tag}`, 'operator')
    const rule = await newRule(engineer, { name: `AS yield ${tag}`, kind: 'yield_low', partNumber: P, step: 'final', threshold: 97, windowUnits: 25 })
    const station = await newStation(engineer, 'AS')
    const product = await productId(db, P)
    for (const [target, targetId] of [['rule', rule], ['product', product], ['station', station]] as const) {
      const r = await follow(me.cookie, { target, targetId })
      expect(r.status, JSON.stringify(r.body)).toBe(201)
      expect(r.body.subscription).toMatchObject({ target, targetId })
    }
    const list = await mine(me.cookie)
    expect(list.map((s) => s.label).sort()).toEqual([`AS yield ${tag}`, expect.stringMatching(/^AS-/), `${P} · Shipping test doubler`].sort())
  })

  it('answers the existing subscription with 200 when following again, and keeps one row', async () => {
    const me = await watcher(admin, `as-again-${tag}`)
    const product = await productId(db, P)
    const first = await follow(me.cookie, { target: 'product', targetId: product })
    const second = await follow(me.cookie, { target: 'product', targetId: product })
    expect([first.status, second.status]).toEqual([201, 200])
    expect(second.body.subscription.id).toBe(first.body.subscription.id)
    expect(await db('alert_subscriptions').where({ user_id: me.id })).toHaveLength(1)
  })

  it('refuses a target that does not exist (422) and a malformed body (400)', async () => {
    const r = await follow(engineer, { target: 'station', targetId: 99_999_999 })
    expect(r.status).toBe(422)
    expect(r.body.errors[0].pointer).toBe('/targetId')
    expect((await follow(engineer, { target: 'lot', targetId: 1 })).status).toBe(400)
    expect((await follow(engineer, { target: 'rule' })).status).toBe(400)
  })

  it('removes only one\'s own: another user\'s subscription answers 404 and stays', async () => {
    const a = await watcher(admin, `as-a-${tag}`)
    const b = await watcher(admin, `as-b-${tag}`)
    const s = (await follow(a.cookie, { target: 'product', targetId: await productId(db, P) })).body.subscription
    expect((await call('DELETE', `/api/me/alert-subscriptions/${s.id}`, { cookie: b.cookie })).status).toBe(404)
    expect(await mine(a.cookie)).toHaveLength(1)
    expect((await call('DELETE', `/api/me/alert-subscriptions/${s.id}`, { cookie: a.cookie })).status).toBe(200)
    expect(await mine(a.cookie)).toHaveLength(0)
    expect((await call('DELETE', `/api/me/alert-subscriptions/${s.id}`, { cookie: a.cookie })).status).toBe(404)
    const customer = await signIn(ROLE_ACCOUNTS.customer)
    expect((await call('GET', '/api/me/alert-subscriptions', { cookie: customer })).status).toBe(403)
  })
})

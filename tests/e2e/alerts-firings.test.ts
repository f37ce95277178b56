// What rules raised: listed newest first in keyset pages, counted for the signed-in user through what they follow and
// the stations they own, acknowledged once with an optional comment, and discussed in comments.
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { call, signIn, ROLE_ACCOUNTS } from '../support/http'
import { makePart } from '../support/shipping'
import { insertFiring, newRule, newStation, productId, watcher } from '../support/alerts'

const tag = Date.now().toString(36).toUpperCase()
const P = `AF-${tag}`.slice(0, 30)
const P2 = `AF2-${tag}`.slice(0, 30)
let db: Knex
let admin = ''
let engineer = ''
const ids = { p: 0, p2: 0, station: 0, rule: 0, rule2: 0, silent: 0 }

const count = (cookie: string) => call('GET', '/api/alerts/count', { cookie }).then((r) => { expect(r.status).toBe(200); return r.body as { open: number; mine: number } })
const list = (cookie: string, query: string) => call('GET', `/api/alerts?${query}`, { cookie })
const follow = (cookie: string, target: string, targetId: number) => call('POST', '/api/me/alert-subscriptions', { cookie, body: { target, targetId } })

beforeAll(async () => {
  db = createKnex(connectionFromEnv(), { min: 0, max: 2 })
  admin = await signIn(ROLE_ACCOUNTS.admin)
  engineer = await signIn(ROLE_ACCOUNTS.engineer)
  await makePart(P)
  await makePart(P2)
  ids.p = await productId(db, P)
  ids.p2 = await productId(db, P2)
  ids.station = await newStation(engineer, 'AF')
  const cpk = { kind: 'cpk_low', step: 'final', parameter: 'output_power', threshold: 1.33, windowUnits: 30 }
  ids.rule = await newRule(engineer, { name: `AF cpk ${tag}`, partNumber: P, ...cpk })
  ids.rule2 = await newRule(engineer, { name: `AF2 cpk ${tag}`, partNumber: P2, ...cpk })
  ids.silent = await newRule(engineer, { name: `AF silent ${tag}`, kind: 'station_silent', silentMinutes: 30, stationId: ids.station })
})
afterAll(async () => { await db.destroy() })

describe('alerts concerning me', () => {
  it('counts the open firings of followed rules, products and stations, and of stations one owns', async () => {
    const a = await watcher(admin, `af-a-${tag}`)
    const b = await watcher(admin, `af-b-${tag}`, 'operator')
    const f1 = await insertFiring(db, { ruleId: ids.rule, productId: ids.p })
    const f2 = await insertFiring(db, { ruleId: ids.rule2, productId: ids.p2 })
    const f3 = await insertFiring(db, { ruleId: ids.silent, stationId: ids.station })

    const before = await count(a.cookie)
    expect(before.mine).toBe(0)
    expect(before.open).toBeGreaterThanOrEqual(3)

    expect((await follow(a.cookie, 'rule', ids.rule)).status).toBe(201)
    expect((await count(a.cookie)).mine).toBe(1)
    expect((await follow(a.cookie, 'product', ids.p2)).status).toBe(201)
    expect((await count(a.cookie)).mine).toBe(2)
    expect((await follow(a.cookie, 'station', ids.station)).status).toBe(201)
    expect((await count(a.cookie)).mine).toBe(3)
    // following the product of a rule already followed counts its firings once
    expect((await follow(a.cookie, 'product', ids.p)).status).toBe(201)
    expect((await count(a.cookie)).mine).toBe(3)

    // b follows nothing but owns the station
    expect((await count(b.cookie)).mine).toBe(0)
    expect((await call('PUT', `/api/stations/${ids.station}/owner`, { cookie: engineer, body: { ownerUserId: b.id } })).status).toBe(200)
    expect((await count(b.cookie)).mine).toBe(1)
    const mineOfB = await list(b.cookie, 'mine=1')
    expect(mineOfB.body.alerts.map((x: any) => x.id)).toEqual([f3])

    const mineOfA = (await list(a.cookie, 'mine=1')).body.alerts.map((x: any) => x.id)
    expect(new Set(mineOfA)).toEqual(new Set([f1, f2, f3]))

    // an acknowledged firing no longer counts
    expect((await call('POST', `/api/alerts/${f3}/acknowledge`, { cookie: b.cookie })).status).toBe(200)
    expect((await count(b.cookie)).mine).toBe(0)
    expect((await count(a.cookie)).mine).toBe(2)
    const open = (await list(a.cookie, 'mine=1')).body.alerts.map((x: any) => x.id)
    expect(new Set(open)).toEqual(new Set([f1, f2]))
    const all = (await list(a.cookie, 'mine=1&state=all')).body.alerts.map((x: any) => x.id)
    expect(new Set(all)).toEqual(new Set([f1, f2, f3]))
    expect((await list(a.cookie, 'mine=1&state=acknowledged')).body.alerts.map((x: any) => x.id)).toEqual([f3])
  })
})

describe('the list', () => {
  it('pages newest first by raise time then id, with no firing twice or left out', async () => {
    const P3 = `AFP-${tag}`.slice(0, 30)
    await makePart(P3)
    const p3 = await productId(db, P3)
    const rule = await newRule(engineer, { name: `AF page ${tag}`, kind: 'yield_low', partNumber: P3, step: 'final', threshold: 95, windowUnits: 20 })
    const t0 = Date.UTC(2026, 10, 20, 8, 0, 0)
    const times = [t0, t0 + 1000, t0 + 1000, t0 + 1000, t0 + 2500, t0 + 60_000, t0 - 5]
    const inserted: { id: number; at: number }[] = []
    for (const at of times) inserted.push({ id: await insertFiring(db, { ruleId: rule, productId: p3, raisedAt: new Date(at) }), at })
    const expected = [...inserted].sort((x, y) => y.at - x.at || y.id - x.id).map((x) => x.id)

    const seen: number[] = []
    let cursor: string | null = null
    let pages = 0
    do {
      const r = await list(engineer, `product=${P3}&state=all&limit=2${cursor ? `&cursor=${cursor}` : ''}`)
      expect(r.status).toBe(200)
      expect(r.body.alerts.length).toBeLessThanOrEqual(2)
      seen.push(...r.body.alerts.map((x: any) => x.id))
      cursor = r.body.next
      pages += 1
    } while (cursor && pages < 10)
    expect(seen).toEqual(expected)
    expect(pages).toBe(4)
  })

  it('filters by kind, product and station, and carries figures, link and the rule', async () => {
    const id = await insertFiring(db, { ruleId: ids.silent, stationId: ids.station, summary: 'no post for 41 min', figures: [{ label: 'Silent for', value: 41, unit: 'min' }], link: `/stations/${ids.station}` })
    const r = await list(engineer, `kind=station_silent&station=${ids.station}&state=all`)
    expect(r.status).toBe(200)
    const got = r.body.alerts.find((x: any) => x.id === id)
    expect(got).toMatchObject({ ruleId: ids.silent, ruleName: `AF silent ${tag}`, kind: 'station_silent', summary: 'no post for 41 min', link: `/stations/${ids.station}`, figures: [{ label: 'Silent for', value: 41, unit: 'min' }], acknowledgedAt: null, comments: [] })
    expect(r.body.alerts.every((x: any) => x.kind === 'station_silent')).toBe(true)
    const byProduct = (await list(engineer, `product=${P2}&state=all`)).body.alerts
    expect(byProduct.length).toBeGreaterThan(0)
    expect(byProduct.every((x: any) => x.ruleId === ids.rule2)).toBe(true)
    expect((await list(engineer, 'product=NO-SUCH-PART-AF')).body).toEqual({ alerts: [], next: null })
  })

  it('answers 400 for unreadable filters and 403 to a customer', async () => {
    expect((await list(engineer, 'state=closed')).status).toBe(400)
    expect((await list(engineer, 'kind=loud')).status).toBe(400)
    expect((await list(engineer, 'cursor=yesterday')).status).toBe(400)
    expect((await list(engineer, 'limit=0')).status).toBe(400)
    expect((await list(engineer, 'station=x')).status).toBe(400)
    const customer = await signIn(ROLE_ACCOUNTS.customer)
    expect((await list(customer, '')).status).toBe(403)
    expect((await call('GET', '/api/alerts/count', { cookie: customer })).status).toBe(403)
  })
})

describe('acknowledging and commenting', () => {
  it('acknowledges once with a comment in the same transaction, audited; a second time is 409', async () => {
    const operator = await signIn(ROLE_ACCOUNTS.operator)
    const id = await insertFiring(db, { ruleId: ids.rule, productId: ids.p })
    const r = await call('POST', `/api/alerts/${id}/acknowledge`, { cookie: operator, body: { comment: 'Re-seated the cable at the test head.' } })
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(r.body.alert.acknowledgedAt).toEqual(expect.any(String))
    expect(r.body.alert.acknowledgedBy).toEqual(expect.any(String))
    expect(r.body.alert.comments).toEqual([expect.objectContaining({ body: 'Re-seated the cable at the test head.', author: r.body.alert.acknowledgedBy })])
    const audit = await db('audit_log').where({ entity: 'alert_firing', entity_id: String(id) })
    expect(audit.map((a: any) => a.action)).toEqual(['acknowledge'])
    expect(JSON.stringify(audit[0].after)).toContain('Re-seated')

    const again = await call('POST', `/api/alerts/${id}/acknowledge`, { cookie: engineer, body: { comment: 'me too' } })
    expect(again.status).toBe(409)
    expect(await db('alert_comments').where({ firing_id: id })).toHaveLength(1)
    expect((await call('POST', '/api/alerts/99999999/acknowledge', { cookie: engineer })).status).toBe(404)
  })

  it('refuses an empty or over-long acknowledgement comment and leaves the alert open', async () => {
    const id = await insertFiring(db, { ruleId: ids.rule, productId: ids.p })
    for (const comment of ['', '   ', 'x'.repeat(2001)]) {
      const r = await call('POST', `/api/alerts/${id}/acknowledge`, { cookie: engineer, body: { comment } })
      expect(r.status).toBe(400)
      expect(r.body.errors[0].pointer).toBe('/comment')
    }
    expect((await db('alert_firings').where({ id }).first()).acknowledged_at).toBeNull()
    // no body at all acknowledges without a comment
    const bare = await call('POST', `/api/alerts/${id}/acknowledge`, { cookie: engineer })
    expect(bare.status).toBe(200)
    expect(bare.body.alert.comments).toEqual([])
  })

  it('adds comments of 1 to 2000 characters, oldest first, on open and acknowledged alerts alike', async () => {
    const id = await insertFiring(db, { ruleId: ids.rule, productId: ids.p })
    const first = await call('POST', `/api/alerts/${id}/comments`, { cookie: engineer, body: { body: 'Looking at lot trends now.' } })
    expect(first.status).toBe(201)
    const long = 'y'.repeat(2000)
    const operator = await signIn(ROLE_ACCOUNTS.operator)
    const second = await call('POST', `/api/alerts/${id}/comments`, { cookie: operator, body: { body: long } })
    expect(second.status).toBe(201)
    expect(second.body.alert.comments.map((c: any) => c.body)).toEqual(['Looking at lot trends now.', long])
    expect(new Set(second.body.alert.comments.map((c: any) => c.author)).size).toBe(2)
    for (const body of ['', ' \n ', 'z'.repeat(2001)]) {
      const r = await call('POST', `/api/alerts/${id}/comments`, { cookie: engineer, body: { body } })
      expect(r.status).toBe(400)
      expect(r.body.errors[0].pointer).toBe('/body')
    }
    expect(await db('alert_comments').where({ firing_id: id })).toHaveLength(2)
    expect((await db('audit_log').where({ entity: 'alert_firing', entity_id: String(id), action: 'comment' }))).toHaveLength(2)
    expect((await call('POST', '/api/alerts/99999999/comments', { cookie: engineer, body: { body: 'hello' } })).status).toBe(404)
    const listed = (await list(engineer, `product=${P}&state=all`)).body.alerts.find((x: any) => x.id === id)
    expect(listed.comments).toHaveLength(2)
  })
})

// Two customers, each with a released shipment whose units carry certificates. Customer A tries every customer-facing
// route with B's ids, serials and numbers in the URL, and gets exactly what an id that does not exist gets.
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { call, signIn, type Reply } from '../support/http'
import { shippedUnits, type ShippedSet } from '../support/shipped-units'

let db: Knex
const tag = `TI${Date.now().toString(36).slice(-5).toUpperCase()}${process.pid % 100}`
let a: ShippedSet
let b: ShippedSet
let cookieA: string

beforeAll(async () => {
  db = createKnex(connectionFromEnv(), { min: 0, max: 2 })
  a = await shippedUnits(db, { tag: `${tag}A`, count: 2, customer: 'QUILL' })
  b = await shippedUnits(db, { tag: `${tag}B`, count: 2, customer: 'SALT' })
  cookieA = await signIn('buyer@quillfeather.test')
}, 120_000)

afterAll(async () => { await db.destroy() })

function expectNotFound(theirs: Reply, none: Reply, what: string) {
  expect(theirs.status, what).toBe(404)
  expect(theirs.headers.get('content-type'), what).toContain('application/problem+json')
  expect(theirs.body, what).toEqual(none.body)
  expect(none.status, what).toBe(404)
}

/** [route, A's own (must answer 200), B's, one that does not exist] */
const byId = () => [
  ['shipment', `/api/shipments/${a.shipmentId}`, `/api/shipments/${b.shipmentId}`, '/api/shipments/999999999'],
  ['certificates ZIP', `/api/shipments/${a.shipmentId}/certificates.zip`, `/api/shipments/${b.shipmentId}/certificates.zip`, '/api/shipments/999999999/certificates.zip'],
  ['measurements CSV', `/api/shipments/${a.shipmentId}/measurements.csv`, `/api/shipments/${b.shipmentId}/measurements.csv`, '/api/shipments/999999999/measurements.csv'],
  ['unit', `/api/portal/units/VFW-T3-375/${a.serials[0]}`, `/api/portal/units/VFW-T3-375/${b.serials[0]}`, `/api/portal/units/VFW-T3-375/${tag}-NONE`],
  ['certificate PDF', `/api/certificates/${a.certificates[0]!.number}.pdf`, `/api/certificates/${b.certificates[0]!.number}.pdf`, `/api/certificates/${tag}-NONE.pdf`],
] as const

describe('customer A against customer B\'s data', () => {
  it('every route keyed by an id answers B\'s ids exactly as ids that do not exist', async () => {
    for (const [what, own, theirs, none] of byId()) {
      expect((await call('GET', own, { cookie: cookieA })).status, `${what} (own)`).toBe(200)
      expectNotFound(await call('GET', theirs, { cookie: cookieA }), await call('GET', none, { cookie: cookieA }), what)
    }
  })

  it('a draft shipment of A\'s own company is not shown to A either', async () => {
    await db('shipments').where({ id: a.shipmentId }).update({ status: 'draft' })
    try {
      for (const [what, own, , none] of byId().slice(0, 3)) {
        expectNotFound(await call('GET', own, { cookie: cookieA }), await call('GET', none, { cookie: cookieA }), `${what} of a draft`)
      }
    } finally {
      await db('shipments').where({ id: a.shipmentId }).update({ status: 'released' })
    }
  })

  it('the searches never return B\'s shipments or serials', async () => {
    const serials = await call('GET', `/api/portal/units?q=${tag}`, { cookie: cookieA })
    expect(serials.status).toBe(200)
    expect(serials.body.units.map((u: any) => u.serial).sort()).toEqual([...a.serials].sort())
    expect((await call('GET', `/api/portal/units?q=${b.serials[0]}`, { cookie: cookieA })).body).toMatchObject({ total: 0, units: [] })
    const shipments = await call('GET', `/api/shipments?q=${b.code}`, { cookie: cookieA })
    expect(shipments.status).toBe(200)
    expect(shipments.body.shipments).toEqual([])
    // a customer filter in the query is ignored: the account decides
    const customerB = await db('customers').where({ code: 'SALT' }).first('id')
    const filtered = await call('GET', `/api/shipments?customer=${customerB.id}&q=${tag}`, { cookie: cookieA })
    expect(filtered.body.shipments.map((s: any) => s.code)).toEqual([a.code])
  })

  it('nothing A reads names B\'s serials, shipment or certificates', async () => {
    const texts = [] as string[]
    for (const [, own] of byId()) texts.push(JSON.stringify((await call('GET', own, { cookie: cookieA })).body))
    const all = texts.join('\n')
    for (const secret of [b.code, ...b.serials, ...b.certificates.map((c) => c.number), ...b.certificates.map((c) => c.verifyCode)]) expect(all).not.toContain(secret)
  })

  it('routes a customer may not call at all answer 403 whatever the id', async () => {
    const staffOnly = [
      ['GET', `/api/units/${b.serials[0]}`], ['GET', `/api/units/${tag}-NONE`],
      ['GET', `/api/lots/${b.lot}`], ['GET', '/api/lots/NO-SUCH-LOT'],
      ['PATCH', `/api/shipments/${b.shipmentId}`], ['PATCH', '/api/shipments/999999999'],
      ['PATCH', `/api/shipments/${a.shipmentId}`],
      ['GET', '/api/customers/1'], ['GET', '/api/customers/999999999'],
    ] as const
    for (const [method, path] of staffOnly) {
      const r = await call(method, path, { cookie: cookieA, body: method === 'GET' ? undefined : {} })
      expect(r.status, `${method} ${path}`).toBe(403)
      expect(r.headers.get('content-type')).toContain('application/problem+json')
    }
  })
})

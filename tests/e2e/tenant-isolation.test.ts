// Two customers, each with a released shipment whose units carry certificates. Customer A tries every customer-facing
// route with B's ids, serials and numbers in the URL, and gets exactly what an id that does not exist gets.
// The routes a customer may call are read from the server/api tree and API_POLICY, and each must have a case here:
// a route added for customers without one fails the first test.
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { call, signIn, type Reply } from '../support/http'
import { apiRoutesFromFiles } from '../support/route-files'
import { API_POLICY } from '../../server/utils/access-policy'
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

/** Routes keyed by an id in the path: [A's own (must answer 200), B's, one that does not exist]. */
const KEYED: Record<string, () => readonly [string, string, string]> = {
  'GET /api/shipments/:id': () => [`/api/shipments/${a.shipmentId}`, `/api/shipments/${b.shipmentId}`, '/api/shipments/999999999'],
  'GET /api/shipments/:id/certificates.zip': () => [`/api/shipments/${a.shipmentId}/certificates.zip`, `/api/shipments/${b.shipmentId}/certificates.zip`, '/api/shipments/999999999/certificates.zip'],
  'GET /api/shipments/:id/measurements.csv': () => [`/api/shipments/${a.shipmentId}/measurements.csv`, `/api/shipments/${b.shipmentId}/measurements.csv`, '/api/shipments/999999999/measurements.csv'],
  'GET /api/portal/units/:partNumber/:serial': () => [`/api/portal/units/VFW-T3-375/${a.serials[0]}`, `/api/portal/units/VFW-T3-375/${b.serials[0]}`, `/api/portal/units/VFW-T3-375/${tag}-NONE`],
  'GET /api/certificates/:number.pdf': () => [`/api/certificates/${a.certificates[0]!.number}.pdf`, `/api/certificates/${b.certificates[0]!.number}.pdf`, `/api/certificates/${tag}-NONE.pdf`],
}

/** Lists and searches: asked for B's things by name, they answer none of them, and A's own when asked for those. */
const LISTS: Record<string, () => Promise<void>> = {
  'GET /api/portal/units': async () => {
    const own = await call('GET', `/api/portal/units?q=${tag}`, { cookie: cookieA })
    expect(own.status).toBe(200)
    expect(own.body.units.map((u: any) => u.serial).sort()).toEqual([...a.serials].sort())
    expect((await call('GET', `/api/portal/units?q=${b.serials[0]}`, { cookie: cookieA })).body).toMatchObject({ total: 0, units: [] })
  },
  'GET /api/shipments': async () => {
    const theirs = await call('GET', `/api/shipments?q=${b.code}`, { cookie: cookieA })
    expect(theirs.status).toBe(200)
    expect(theirs.body.shipments).toEqual([])
    // a customer filter in the query is ignored: the account decides
    const customerB = await db('customers').where({ code: 'SALT' }).first('id')
    const filtered = await call('GET', `/api/shipments?customer=${customerB.id}&q=${tag}`, { cookie: cookieA })
    expect(filtered.body.shipments.map((s: any) => s.code)).toEqual([a.code])
  },
}

/**
 * Open to anyone by design, customers included: public certificate verification. Its key is the certificate's
 * 128-bit verification code, known only to whoever holds the document; a customer's session adds nothing to what an
 * anonymous caller gets.
 */
const OPEN_BY_DESIGN: Record<string, () => Promise<void>> = {
  'GET /api/verify/:code': async () => {
    const code = b.certificates[0]!.verifyCode
    const asA = await call('GET', `/api/verify/${code}`, { cookie: cookieA, headers: { 'x-forwarded-for': `10.250.${process.pid % 250}.1` } })
    const anonymous = await call('GET', `/api/verify/${code}`, { headers: { 'x-forwarded-for': `10.250.${process.pid % 250}.2` } })
    expect(asA.status).toBe(anonymous.status)
    expect(asA.body).toEqual(anonymous.body)
    expect(JSON.stringify(asA.body)).not.toContain(b.code)
    expect((await call('GET', `/api/verify/${tag}NONE`, { cookie: cookieA })).status).toBe(404)
  },
}

/** Routes a customer may call that carry no other customer's data, with the reason. */
const NO_TENANT_DATA: Record<string, string> = {
  'GET /api/health': 'liveness only',
  'POST /api/auth/login': 'signs the caller in',
  'POST /api/auth/sign-out': 'ends the caller\'s own session',
  'POST /api/auth/password-reset': 'answers the same for any address and names nobody',
  'POST /api/auth/password-reset/confirm': 'keyed by a secret e-mailed token',
  'GET /api/me': 'the caller\'s own account',
  'POST /api/me/password': 'the caller\'s own password',
  'POST /api/me/sign-out-everywhere': 'the caller\'s own sessions',
  'GET /api/plant-time': 'the plant\'s time zone',
  'GET /api/v1/schema/run.json': 'the published run schema',
}

/** Every route in the server/api tree a customer-role user may call (its rule names customers, or is public). */
function customerRoutes(): string[] {
  return apiRoutesFromFiles().filter((route) => {
    const [method, path] = route.split(' ')
    const rule = API_POLICY.find((r) => r.method === method && r.path === path)
    return !!rule && (rule.allow === 'public' || rule.allow.includes('customer'))
  })
}

const byId = () => Object.entries(KEYED).map(([route, paths]) => [route, ...paths()] as const)

describe('the routes a customer may call', () => {
  it('each has a tenant case here (keyed, list, open by design) or a reason it holds no other customer\'s data', () => {
    const classified = [...Object.keys(KEYED), ...Object.keys(LISTS), ...Object.keys(OPEN_BY_DESIGN), ...Object.keys(NO_TENANT_DATA)]
    expect(new Set(classified).size, 'a route is classified twice').toBe(classified.length)
    const routes = customerRoutes()
    expect(routes.filter((r) => !classified.includes(r)), 'customer routes without a tenant case').toEqual([])
    expect(classified.filter((r) => !routes.includes(r)), 'cases for routes customers cannot call').toEqual([])
  })

  for (const route of Object.keys(KEYED)) {
    it(`${route}: B's id answers as an id that does not exist`, async () => {
      const [own, theirs, none] = KEYED[route]!()
      expect((await call('GET', own, { cookie: cookieA })).status, `${route} (own)`).toBe(200)
      expectNotFound(await call('GET', theirs, { cookie: cookieA }), await call('GET', none, { cookie: cookieA }), route)
    })
  }

  for (const route of Object.keys(LISTS)) it(`${route}: never lists B's things`, () => LISTS[route]!())
  for (const route of Object.keys(OPEN_BY_DESIGN)) it(`${route}: a customer gets what anyone gets`, () => OPEN_BY_DESIGN[route]!())
})

describe('customer A against customer B\'s data', () => {
  it('a draft shipment of A\'s own company is not shown to A either', async () => {
    await db('shipments').where({ id: a.shipmentId }).update({ status: 'draft' })
    try {
      for (const [what, own, , none] of byId().filter(([route]) => route.startsWith('GET /api/shipments/'))) {
        expectNotFound(await call('GET', own, { cookie: cookieA }), await call('GET', none, { cookie: cookieA }), `${what} of a draft`)
      }
    } finally {
      await db('shipments').where({ id: a.shipmentId }).update({ status: 'released' })
    }
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

// Adding serials, releasing, dispatching and returning shipments against the rules a unit must meet to ship.
import { beforeAll, describe, expect, it } from 'vitest'
import { call, signIn, ROLE_ACCOUNTS } from '../support/http'
import { firstCustomerId, makePart, postRun, releaseLot } from '../support/shipping'

const tag = `${Date.now().toString(36)}${process.pid.toString(36)}`.toUpperCase()
const P = `SH-${tag}`.slice(0, 30)
const P2 = `SK-${tag}`.slice(0, 30)
const L1 = `${P}-1`.slice(0, 32)
const L2 = `${P}-2`.slice(0, 32)
const L3 = `${P}-3`.slice(0, 32)
const L4 = `${P}-4`.slice(0, 32)
const K1 = `${P2}-1`.slice(0, 32)
let quality = ''
let engineer = ''
let admin = ''
let quill = 0

const newShipment = async (extra: Record<string, unknown> = {}) => {
  const r = await call('POST', '/api/shipments', { cookie: quality, body: { customerId: quill, ...extra } })
  expect(r.status, JSON.stringify(r.body)).toBe(201)
  return r.body.shipment.id as number
}
const add = (id: number, lines: string[]) => call('POST', `/api/shipments/${id}/serials`, { cookie: quality, body: { lines } })
const unitsOf = async (id: number) => (await call('GET', `/api/shipments/${id}`, { cookie: quality })).body

beforeAll(async () => {
  quality = await signIn(ROLE_ACCOUNTS.quality)
  engineer = await signIn(ROLE_ACCOUNTS.engineer)
  admin = await signIn(ROLE_ACCOUNTS.admin)
  quill = await firstCustomerId(quality, 'QUILL')
  await makePart(P)
  await makePart(P2)
  for (const s of ['A1', 'A2', 'A3', 'A4', 'A5', 'DUO', 'R1', 'T1', 'Z1']) await postRun(P, L1, s)
  await postRun(P, L2, 'B1')
  await postRun(P, L2, 'BF', { power: 20 })
  await postRun(P, L3, 'H1')
  await postRun(P, L4, 'B2')
  await postRun(P2, K1, 'DUO')
  for (const lot of [L1, L3, K1]) await releaseLot(lot, quality)
}, 120_000)

describe('serial lists', () => {
  it('previews a list row by row and stores nothing until confirmed; confirming is all or nothing', async () => {
    const other = await newShipment()
    expect((await add(other, ['A5'])).status).toBe(200)
    const id = await newShipment()
    const lines = ['partNumber,serial', 'A1', `${P},A2`, 'A1', 'NO-SUCH-SERIAL', `${P2},A3`, 'DUO', `${P2},DUO`, 'BF', 'A5', 'a,b,c', '', 'A3\r']
    const preview = await call('POST', `/api/shipments/${id}/serials/preview`, { cookie: quality, body: { lines } })
    expect(preview.status, JSON.stringify(preview.body)).toBe(200)
    expect(preview.body.rows.map((r: any) => [r.line, r.verdict])).toEqual([
      [2, 'ok'], [3, 'ok'], [4, 'duplicate'], [5, 'unknown_serial'], [6, 'wrong_part'], [7, 'ambiguous'], [8, 'ok'], [9, 'not_passing'], [10, 'in_other_shipment'], [11, 'malformed'], [13, 'ok'],
    ])
    expect(preview.body.rows[4].message).toContain(`is a unit of ${P}, not ${P2}`)
    expect(preview.body.rows[7].message).toMatch(/fail/)
    expect(preview.body.rows[8].message).toMatch(/^already in shipment SHP-/)
    expect(preview.body.counts).toMatchObject({ ok: 4, duplicate: 1, unknown_serial: 1, wrong_part: 1, ambiguous: 1, not_passing: 1, in_other_shipment: 1, malformed: 1 })
    expect(preview.body.addable).toBe(4)
    // nothing stored by the preview
    expect((await unitsOf(id)).unitsTotal).toBe(0)
    expect((await unitsOf(other)).unitsTotal).toBe(1)

    const refused = await add(id, lines)
    expect(refused.status).toBe(409)
    expect(refused.body.rows).toHaveLength(7)
    expect((await unitsOf(id)).unitsTotal).toBe(0)

    const ok = await add(id, ['A1', `${P},A2`, `${P2},DUO`])
    expect(ok.body).toEqual({ added: 3, units: 3 })
    const detail = await unitsOf(id)
    expect(detail.units.map((u: any) => [u.partNumber, u.serial, u.lot, u.latestVerdict])).toEqual([[P, 'A1', L1, 'pass'], [P, 'A2', L1, 'pass'], [P2, 'DUO', K1, 'pass']])
    expect((await call('POST', `/api/shipments/${id}/serials/preview`, { cookie: quality, body: { lines: ['A1'] } })).body.rows[0].verdict).toBe('already_in_shipment')

    // a shipment restricted to a part reads a bare serial as that part's and refuses another part's line
    const restricted = await newShipment({ partNumber: P })
    const r = await call('POST', `/api/shipments/${restricted}/serials/preview`, { cookie: quality, body: { lines: ['DUO', `${P2},DUO`] } })
    expect(r.body.rows.map((x: any) => [x.partNumber, x.verdict])).toEqual([[P, 'ok'], [P2, 'wrong_part']])

    const removed = await call('DELETE', `/api/shipments/${id}/serials`, { cookie: quality, body: { units: [{ partNumber: P, serial: 'A2' }] } })
    expect(removed.body).toEqual({ removed: 1 })
    expect((await unitsOf(id)).unitsTotal).toBe(2)
  })

  it('adds the passing units of a lot and leaves the failing ones out', async () => {
    const id = await newShipment()
    const preview = await call('POST', `/api/shipments/${id}/serials/preview`, { cookie: quality, body: { lot: L2 } })
    expect(preview.body.rows.map((r: any) => [r.serial, r.verdict])).toEqual([['B1', 'ok'], ['BF', 'not_passing']])
    expect((await call('POST', `/api/shipments/${id}/serials`, { cookie: quality, body: { lot: L2 } })).body).toEqual({ added: 1, units: 1 })
    expect((await call('POST', `/api/shipments/${id}/serials`, { cookie: quality, body: { lot: 'NO-SUCH-LOT' } })).status).toBe(422)
  })

  it('previews a list of 10,000 rows in one request', async () => {
    const id = await newShipment()
    const lines = Array.from({ length: 10_000 }, (_, i) => (i % 1000 === 0 ? 'A3' : `${P}-MISSING-${i}`))
    const r = await call('POST', `/api/shipments/${id}/serials/preview`, { cookie: quality, body: { lines } })
    expect(r.status).toBe(200)
    expect(r.body.rows).toHaveLength(10_000)
    expect(r.body.counts).toMatchObject({ ok: 1, duplicate: 9, unknown_serial: 9990 })
    expect((await call('POST', `/api/shipments/${id}/serials/preview`, { cookie: quality, body: { lines: [...lines, 'A4'] } })).status).toBe(400)
  })
})

describe('releasing a shipment', () => {
  it('refuses, naming every blocking serial and why; a deviation covers all but a hold and a scrap', async () => {
    const station = await call('POST', '/api/stations', { cookie: engineer, body: { name: `SHIP-CAL-${tag}`.slice(0, 40) } })
    expect(station.status).toBe(201)
    const instrument = await call('POST', '/api/instruments', { cookie: engineer, body: { assetNumber: `SH-${tag}`.slice(0, 32), kind: 'Power sensor', model: 'PS-18', serial: 'S-1', stationId: station.body.station.id, installedAt: new Date(Date.now() - 20 * 86_400_000).toISOString() } })
    expect(instrument.status).toBe(201)

    const id = await newShipment()
    expect((await add(id, ['A3', 'A4', 'R1', 'T1', 'Z1', 'B2', 'H1'].map((s) => `${P},${s}`))).status).toBe(200)
    // R1: a failing run tested last arrives first, then an earlier passing one: the fail is its latest result by test time
    const now = Date.now()
    await postRun(P, L1, 'R1', { power: 20, startedAt: now + 60_000 })
    await postRun(P, L1, 'R1', { power: 10, startedAt: now + 30_000 })
    // A4: retaken on a station whose instrument has no calibration record
    const lapsed = await postRun(P, L1, 'A4', { token: station.body.token, startedAt: now + 40_000 })
    expect(lapsed.calibrationLapsed).toBe(true)
    // T1: passed, failed, then passed: three attempts against a limit of one
    await postRun(P, L1, 'T1', { power: 20, startedAt: now + 10_000 })
    await postRun(P, L1, 'T1', { power: 10, startedAt: now + 20_000 })
    // Z1 is scrapped; H1's lot is held
    expect((await call('POST', `/api/units/${P}/Z1/dispositions`, { cookie: quality, body: { step: 'final', kind: 'scrap', reason: 'Cracked cavity lid' } })).status).toBe(201)
    expect((await call('POST', `/api/lots/${L3}/hold`, { cookie: quality, body: { reason: 'Solder voids found on the lot' } })).status).toBe(200)
    expect((await call('PUT', `/api/products/${P}/retest-policy`, { cookie: engineer, body: { policies: [{ step: 'final', maxAttempts: 1 }] } })).body.policies).toEqual([expect.objectContaining({ step: 'final', maxAttempts: 1 })])

    const refused = await call('POST', `/api/shipments/${id}/release`, { cookie: quality, body: {} })
    expect(refused.status, JSON.stringify(refused.body)).toBe(409)
    const why = Object.fromEntries(refused.body.blocking.map((b: any) => [b.serial, b.problems]))
    expect(why).toEqual({
      A4: ['latest final result was taken past a calibration due date', '2 attempts at final exceed the retest limit of 1 with no rework or deviation decision'],
      B2: [`lot ${L4} is not released`],
      H1: [`lot ${L3} is on hold`],
      R1: ['latest final result is a fail', '3 attempts at final exceed the retest limit of 1 with no rework or deviation decision'],
      T1: ['3 attempts at final exceed the retest limit of 1 with no rework or deviation decision'],
      Z1: ['scrapped at final: Cracked cavity lid'],
    })
    expect(refused.body.units).toBe(7)

    // a rework decision at three attempts covers T1's attempts so far
    const rework = await call('POST', `/api/units/${P}/T1/dispositions`, { cookie: quality, body: { step: 'final', kind: 'rework', reason: 'Re-tuned the output filter' } })
    expect(rework.body.disposition).toMatchObject({ atAttempts: 3, kind: 'rework' })
    const second = await call('POST', `/api/shipments/${id}/release`, { cookie: quality, body: {} })
    expect(second.body.blocking.map((b: any) => b.serial)).toEqual(['A4', 'B2', 'H1', 'R1', 'Z1'])

    const underDeviation = await call('POST', `/api/shipments/${id}/release`, { cookie: quality, body: { deviation: 'Customer accepts by concession 44' } })
    expect(underDeviation.status).toBe(409)
    expect(underDeviation.body.blocking).toEqual([
      { partNumber: P, serial: 'H1', problems: [`lot ${L3} is on hold`] },
      { partNumber: P, serial: 'Z1', problems: ['scrapped at final: Cracked cavity lid'] },
    ])
    expect((await call('GET', `/api/shipments/${id}`, { cookie: quality })).body.shipment.status).toBe('draft')

    await call('DELETE', `/api/shipments/${id}/serials`, { cookie: quality, body: { units: [{ partNumber: P, serial: 'H1' }, { partNumber: P, serial: 'Z1' }] } })
    const released = await call('POST', `/api/shipments/${id}/release`, { cookie: quality, body: { deviation: 'Customer accepts by concession 44' } })
    expect(released.status, JSON.stringify(released.body)).toBe(200)
    expect(released.body).toMatchObject({ status: 'released', certificates: 5, covered: 3 })
    const audit = await call('GET', `/api/audit?entity=shipment&action=release`, { cookie: admin })
    const row = audit.body.entries.find((e: any) => e.after?.deviation?.reason === 'Customer accepts by concession 44')
    expect(row.after.deviation.serials.sort()).toEqual([`${P},A4`, `${P},B2`, `${P},R1`])
    expect(row.after.signed).toMatchObject({ method: 'recent-sign-in' })
    const detail = await unitsOf(id)
    expect(detail.units.every((u: any) => u.certificate?.status === 'valid')).toBe(true)
    expect((await add(id, ['A5'])).status).toBe(409)
  })

  it('dispatches a released shipment; the lot becomes shipped once all its passing units left; a returned unit ships again superseding its certificate', async () => {
    const lot = `${P}-D`.slice(0, 32)
    await postRun(P, lot, 'D1')
    await postRun(P, lot, 'D2')
    await releaseLot(lot, quality)
    const first = await newShipment()
    await add(first, [`${P},D1`])
    expect((await call('POST', `/api/shipments/${first}/dispatch`, { cookie: quality, body: { carrier: 'Northwind Couriers', trackingRef: 'NW-1' } })).status).toBe(409)
    expect((await call('POST', `/api/shipments/${first}/release`, { cookie: quality, body: {} })).status).toBe(200)
    const d1 = await call('POST', `/api/shipments/${first}/dispatch`, { cookie: admin, body: { carrier: 'Northwind Couriers', trackingRef: 'NW-1' } })
    expect(d1.body).toMatchObject({ status: 'dispatched', lotsShipped: [] })
    let view = (await call('GET', `/api/lots/${lot}`, { cookie: quality })).body.lot
    expect(view).toMatchObject({ status: 'released', shipping: { units: 2, dispatchedUnits: 1 } })

    const second = await newShipment()
    await add(second, [`${P},D2`])
    await call('POST', `/api/shipments/${second}/release`, { cookie: quality, body: {} })
    const d2 = await call('POST', `/api/shipments/${second}/dispatch`, { cookie: quality, body: { carrier: 'Northwind Couriers', trackingRef: 'NW-2' } })
    expect(d2.body.lotsShipped).toEqual([lot])
    view = (await call('GET', `/api/lots/${lot}`, { cookie: quality })).body.lot
    expect(view).toMatchObject({ status: 'shipped', shipping: { units: 2, dispatchedUnits: 2 } })

    const before = (await unitsOf(first)).units[0].certificate
    const ret = await call('POST', `/api/shipments/${first}/returns`, { cookie: quality, body: { partNumber: P, serial: 'D1', returnNumber: 'RMA-77', reason: 'Output power low at the customer', receivedAt: '2026-12-01' } })
    expect(ret.status, JSON.stringify(ret.body)).toBe(201)
    expect((await call('POST', `/api/shipments/${first}/returns`, { cookie: quality, body: { partNumber: P, serial: 'D1', returnNumber: 'RMA-77', reason: 'again', receivedAt: '2026-12-01' } })).status).toBe(422)
    const after = await unitsOf(first)
    expect(after.units[0]).toMatchObject({ serial: 'D1', returnedAt: expect.any(String), certificate: { number: before.number, status: 'valid' } })
    expect(after.shipment.units).toBe(0)

    await postRun(P, lot, 'D1')
    // the retest after the return is its second attempt, beyond the limit of one: quality accepts it as rework
    expect((await call('POST', `/api/units/${P}/D1/dispositions`, { cookie: quality, body: { step: 'final', kind: 'rework', reason: 'Returned, repaired and retested' } })).status).toBe(201)
    const third = await newShipment()
    expect((await add(third, [`${P},D1`])).status).toBe(200)
    expect((await call('POST', `/api/shipments/${third}/release`, { cookie: quality, body: {} })).status).toBe(200)
    const cert = (await unitsOf(third)).units[0].certificate
    expect(cert.number).not.toBe(before.number)
    expect((await unitsOf(first)).units[0].certificate).toMatchObject({ number: before.number, status: 'superseded' })
  })
})

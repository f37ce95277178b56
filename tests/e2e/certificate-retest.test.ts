// A certified unit tested again after its certificate was issued: a failing retest revokes the certificate at once
// and quality finds it among the notices; a passing one waits there until quality reissues it.
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { call, signIn, ROLE_ACCOUNTS, DEMO_PASSWORD } from '../support/http'
import { stationTokens, tripleRun } from '../support/stations'
import { shippedUnits, type ShippedSet } from '../support/shipped-units'

const T3 = stationTokens()['ATE-T3-01']!
let db: Knex
let set: ShippedSet
let quality = ''
const tag = `RTE${Date.now().toString(36).toUpperCase()}`

beforeAll(async () => {
  db = createKnex(connectionFromEnv(), { min: 0, max: 2 })
  set = await shippedUnits(db, { tag, count: 3, customer: 'QUILL' })
  quality = await signIn(ROLE_ACCOUNTS.quality)
})
afterAll(async () => { await db.destroy() })

const retest = (serial: string, passing: boolean) => {
  const base = tripleRun({ lot: set.lot, serial })
  const measurements = passing ? base.measurements : base.measurements.map((m) => (m.name === 'output_power' ? { ...m, value: 12 } : m))
  return call('POST', '/api/v1/runs', { token: T3, body: { ...base, stationVerdict: passing ? 'pass' : 'fail', measurements } })
}
const cert = (serial: string) => set.certificates.find((c) => c.serial === serial)!

describe('retests after issue', () => {
  it('revoke on a failure, list both kinds for quality, and leave the reissued one off the list', async () => {
    const [failing, passing, untouched] = set.serials
    expect((await retest(failing!, false)).body).toMatchObject({ verdict: 'fail' })
    expect((await retest(passing!, true)).body).toMatchObject({ verdict: 'pass' })

    expect((await call('GET', `/api/verify/${cert(failing!).verifyCode}`)).body).toMatchObject({ status: 'revoked' })
    expect((await call('GET', `/api/verify/${cert(passing!).verifyCode}`)).body).toMatchObject({ status: 'valid' })

    const notices = (await call('GET', '/api/certificate-notices', { cookie: quality })).body.notices.filter((n: any) => n.shipmentId === set.shipmentId)
    expect(notices.map((n: any) => [n.serial, n.kind, n.step, n.station]).sort()).toEqual([
      [failing, 'revoked', 'final', 'ATE-T3-01'], [passing, 'reissue', 'final', 'ATE-T3-01'],
    ].sort())
    expect(notices.some((n: any) => n.serial === untouched)).toBe(false)

    const detail = (await call('GET', `/api/shipments/${set.shipmentId}`, { cookie: quality })).body
    const flag = (serial: string) => detail.units.find((u: any) => u.serial === serial).certificate
    expect(flag(failing!)).toMatchObject({ status: 'revoked', retested: true })
    expect(flag(passing!)).toMatchObject({ status: 'valid', retested: true })
    expect(flag(untouched!)).toMatchObject({ status: 'valid', retested: false })

    const reissued = await call('POST', `/api/certificates/${encodeURIComponent(cert(passing!).number)}/reissue`, { cookie: quality, body: { password: DEMO_PASSWORD } })
    expect(reissued.status, JSON.stringify(reissued.body)).toBe(201)
    expect((await call('GET', `/api/verify/${cert(passing!).verifyCode}`)).body).toMatchObject({ status: 'superseded' })
    const after = (await call('GET', '/api/certificate-notices', { cookie: quality })).body.notices.filter((n: any) => n.shipmentId === set.shipmentId)
    expect(after.map((n: any) => n.serial)).toEqual([failing])
  })
})

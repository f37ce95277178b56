// A run stored after a unit's certificate was issued is a retest when it becomes the unit's latest result at its
// step: a failure revokes the certificate in the run's own transaction, a pass leaves it waiting for reissue.
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createKnex, connectionFromEnv } from '../../server/database/connection'
import { ingestBatch } from '../../server/services/ingest/ingest-batch'
import { DEMO_PRODUCTS } from '../../fixtures/demo-catalogue'
import { generateRun, mulberry32 } from '../../fixtures/run-generator'

let db: Knex
let station: { id: number; name: string }
const tripler = DEMO_PRODUCTS.find((p) => p.partNumber === 'VFW-T3-375')!
const lot = `RT-${Date.now().toString(36)}`
const hourAgo = (h: number) => new Date(Date.now() - h * 3_600_000)

function finalRun(serial: string, startedAt: Date, passing: boolean, seed: number) {
  const run = generateRun({ product: tripler, lot, serial, step: 'final', startedAt, rand: mulberry32(seed), withTrace: false })
  // an output power far above the tripler's limit fails the final step
  return passing ? run : { ...run, stationVerdict: 'fail' as const, measurements: run.measurements.map((m) => (m.name === 'output_power' ? { ...m, value: 30 } : m)) }
}

async function post(run: ReturnType<typeof finalRun>) {
  const [r] = await ingestBatch(db, station, [run])
  expect(r!.status, JSON.stringify(r)).toBe(201)
  return db('test_runs').where({ uuid: run.id }).first('id', 'server_verdict')
}

async function certify(serial: string, n: number): Promise<string> {
  const unit = await db('units').where({ serial }).first('id')
  const customer = await db('customers').first('id')
  const user = await db('users').where({ role: 'quality' }).first('id')
  const [shipmentId] = await db('shipments').insert({ code: `${lot}-${n}`, customer_id: customer.id, status: 'released' })
  await db('shipment_units').insert({ shipment_id: shipmentId, unit_id: unit.id })
  const number = `${lot}-C${n}`
  await db('certificates').insert({
    number, verify_code: `${lot}-V${n}`, unit_id: unit.id, shipment_id: shipmentId, customer_id: customer.id, template_version: 1,
    snapshot: '{}', issued_at: new Date(), issued_by: user.id,
  })
  await db('units').where({ id: unit.id }).update({ certified: true })
  return number
}

const certificate = (number: string) => db('certificates').where({ number }).first('status', 'status_reason', 'retest_run_id')
const certified = async (serial: string) => !!Number((await db('units').where({ serial }).first('certified')).certified)

beforeAll(async () => {
  db = createKnex(connectionFromEnv())
  station = await db('stations').where({ name: 'ATE-T3-01' }).first('id', 'name')
})
afterAll(async () => { await db.destroy() })

describe('a retest after a certificate was issued', () => {
  it('revokes the certificate at once when it fails, with an audit row naming it', async () => {
    const serial = `${lot}-A`
    const first = await post(finalRun(serial, hourAgo(5), true, 1))
    expect(first.server_verdict).toBe('pass')
    const number = await certify(serial, 1)
    const retest = await post(finalRun(serial, hourAgo(1), false, 2))
    expect(retest.server_verdict).toBe('fail')
    expect(await certificate(number)).toMatchObject({ status: 'revoked', status_reason: 'A retest at final failed after issue.' })
    expect(Number((await certificate(number)).retest_run_id)).toBe(Number(retest.id))
    expect(await certified(serial)).toBe(false)
    const audit = await db('audit_log').where({ entity: 'certificate', entity_id: number }).select('action', 'user_id', 'station_id')
    expect(audit).toEqual([{ action: 'revoke', user_id: null, station_id: station.id }])
  })

  it('leaves the certificate valid and waiting for reissue when it passes', async () => {
    const serial = `${lot}-B`
    await post(finalRun(serial, hourAgo(5), true, 3))
    const number = await certify(serial, 2)
    const retest = await post(finalRun(serial, hourAgo(1), true, 4))
    expect(retest.server_verdict).toBe('pass')
    const row = await certificate(number)
    expect(row.status).toBe('valid')
    expect(Number(row.retest_run_id)).toBe(Number(retest.id))
    expect(await certified(serial)).toBe(true)
  })

  it('ignores a failing run tested before the certified one that arrives late: the latest result is unchanged', async () => {
    const serial = `${lot}-C`
    await post(finalRun(serial, hourAgo(2), true, 5))
    const number = await certify(serial, 3)
    const late = await post(finalRun(serial, hourAgo(6), false, 6))
    expect(late.server_verdict).toBe('fail')
    expect(await certificate(number)).toMatchObject({ status: 'valid', retest_run_id: null })
    expect(await certified(serial)).toBe(true)
    expect(await db('audit_log').where({ entity: 'certificate', entity_id: number }).count({ n: '*' }).first()).toEqual({ n: 0 })
  })
})

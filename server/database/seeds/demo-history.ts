import type { Knex } from 'knex'
import { DEMO_LOTS, DEMO_PRODUCTS, DEMO_STATIONS, type DemoProduct } from '../../../fixtures/demo-catalogue'
import { generateRun, mulberry32, type GeneratedRun } from '../../../fixtures/run-generator'
import { ingestBatch } from '../../services/ingest/ingest-batch'
import { writeAudit } from '../repositories/audit'
import { issueCertificates } from '../../services/certificates/issue'

const HOUR = 3_600_000

/** What the station's own sequencer would say: simple acceptance against the catalogue limits. */
function stationJudgement(product: DemoProduct, run: GeneratedRun): 'pass' | 'fail' {
  for (const m of run.measurements) {
    const q = m.offsetHz ?? m.harmonic ?? 0
    const l = product.limits.find((x) => x.step === run.step && x.name === m.name && (x.qualifier ?? 0) === q)
    if (l && ((l.lsl !== undefined && m.value < l.lsl) || (l.usl !== undefined && m.value > l.usl))) return 'fail'
  }
  return 'pass'
}

// Days before the seed when each lot's testing began and ended: the released and shipped lots finished testing
// days before their release, the open lots are still being tested.
const TEST_WINDOW_DAYS: Record<string, [number, number]> = {
  'D2-2611-A': [20, 4],
  'T3-2611-A': [18, 3],
  'T3-2612-B': [10, 0.25],
  'X8-2611-A': [14, 0.5],
}
// a station's upload reaches Tercet a little after the run finishes
const UPLOAD_DELAY_MS = 90_000
const BATCH = 200

/**
 * Test history for the demo lots, written through the same batch path the stations use: each step's first attempts
 * of the whole lot, then a retest of every unit that failed, step after step.
 */
export async function seedDemoHistory(db: Knex, now = new Date()): Promise<number> {
  const rand = mulberry32(20261201)
  const stations = await db('stations').select('id', 'name')
  const stationByName = new Map(stations.map((s: any) => [s.name, { id: s.id, name: s.name }]))
  let count = 0
  for (const lot of DEMO_LOTS) {
    const product = DEMO_PRODUCTS.find((p) => p.partNumber === lot.partNumber)!
    const lines = DEMO_STATIONS.filter((s) => s.partNumber === lot.partNumber).map((s) => stationByName.get(s.name)!)
    const [fromDays, toDays] = TEST_WINDOW_DAYS[lot.code] ?? [18, 1]
    const start = now.getTime() - fromDays * 24 * HOUR
    const span = (fromDays - toDays) * 24 * HOUR - product.steps.length * 2 * 20 * 60_000
    const clock = Array.from({ length: lot.units }, (_, u) => start + (span * u) / lot.units)
    const serial = (u: number) => `${lot.code.slice(0, 2)}${lot.code.slice(3, 7)}-${String(u + 1).padStart(4, '0')}`
    for (const step of product.steps) {
      const post = async (units: number[], failRate: number) => {
        type Lane = { station: { id: number; name: string }; runs: ReturnType<typeof generateRun>[]; units: number[] }
        const byStation = new Map<number, Lane>()
        for (const u of units) {
          const run = generateRun({ product, lot: lot.code, serial: serial(u), step, startedAt: new Date(clock[u]!), rand, progress: u / lot.units, drift: lot.drift, failRate, withTrace: step === 'final' })
          run.stationVerdict = stationJudgement(product, run)
          clock[u] = clock[u]! + 20 * 60_000
          const station = lines[u % lines.length]!
          const e: Lane = byStation.get(station.id) ?? { station, runs: [], units: [] }
          e.runs.push(run)
          e.units.push(u)
          byStation.set(station.id, e)
        }
        const failed: number[] = []
        for (const { station, runs, units: us } of byStation.values()) {
          for (let i = 0; i < runs.length; i += BATCH) {
            const results = await ingestBatch(db, station, runs.slice(i, i + BATCH), now, {
              touchStation: false, receivedAt: (r) => new Date(r.ctx.finishedAt.getTime() + UPLOAD_DELAY_MS),
            })
            results.forEach((r, k) => {
              if (r.status !== 201) throw new Error(`a demo run was refused: ${JSON.stringify(r)}`)
              count++
              if ((r as { run: { verdict: string } }).run.verdict === 'fail') failed.push(us[i + k]!)
            })
          }
        }
        return failed
      }
      const failed = await post(clock.map((_, u) => u), step === 'final' ? 0.05 : 0.02)
      if (failed.length) await post(failed.sort((a, b) => a - b), 0)
    }
  }
  await seedDemoShipments(db, now)
  // seeded history is old: a station was last seen when it finished its last seeded run, not when the seed ran
  await db.raw('UPDATE stations s SET last_seen_at = (SELECT MAX(r.finished_at) FROM test_runs r WHERE r.station_id = s.id)')
  return count
}

/**
 * Shipments of the demo, each with its certificates issued through the issuing service: the doubler lot went to
 * Saltmarsh and has been dispatched; the tripler lot is split between both customers, released and awaiting dispatch.
 */
async function seedDemoShipments(db: Knex, now: Date): Promise<void> {
  const quality = await db('users').where({ role: 'quality' }).first('id')
  const day = 86_400_000
  const plan = [
    { lot: 'D2-2611-A', customer: 'SALT', code: 'SH-2611-001', po: 'SGS-PO-88410', skip: 0, units: 40, dispatched: true, releasedDaysAgo: 2 },
    { lot: 'T3-2611-A', customer: 'QUILL', code: 'SH-2611-002', po: 'QRO-7731', skip: 0, units: 24, dispatched: false, releasedDaysAgo: 1 },
    { lot: 'T3-2611-A', customer: 'SALT', code: 'SH-2611-003', po: 'SGS-PO-88522', skip: 24, units: 24, dispatched: false, releasedDaysAgo: 1 },
  ]
  const lotReleased = new Map<string, Date>()
  for (const p of plan) {
    const released = new Date(now.getTime() - p.releasedDaysAgo * day)
    if (!lotReleased.has(p.lot) || released < lotReleased.get(p.lot)!) lotReleased.set(p.lot, released)
  }
  await db.transaction(async (trx) => {
    for (const [code, released] of lotReleased) {
      const shipped = plan.some((p) => p.lot === code && p.dispatched)
      await trx('lots').where({ code }).update({ status: shipped ? 'shipped' : 'released', released_at: released, released_by: quality.id, shipped_at: shipped ? now : null })
      await writeAudit(trx, { userId: quality.id, action: 'release', entity: 'lot', entityId: code, before: { status: 'open' }, after: { status: 'released' } })
      if (shipped) await writeAudit(trx, { userId: quality.id, action: 'ship', entity: 'lot', entityId: code, before: { status: 'released' }, after: { status: 'shipped' } })
    }
    for (const p of plan) {
      const lot = await trx('lots').where({ code: p.lot }).first('id', 'product_id')
      const customer = await trx('customers').where({ code: p.customer }).first('id')
      const released = new Date(now.getTime() - p.releasedDaysAgo * day)
      const [shipmentId] = await trx('shipments').insert({
        code: p.code, customer_id: customer.id, product_id: lot.product_id, status: p.dispatched ? 'dispatched' : 'released', customer_po: p.po,
        created_at: new Date(released.getTime() - day), created_by: quality.id, released_at: released, released_by: quality.id,
        dispatched_at: p.dispatched ? now : null, dispatched_by: p.dispatched ? quality.id : null,
        carrier: p.dispatched ? 'Brackwater Couriers' : null, tracking_ref: p.dispatched ? 'BWC-77310-2611' : null,
      })
      const passing = await trx('units as u').join('unit_steps as us', 'us.unit_id', 'u.id')
        .where({ 'u.lot_id': lot.id, 'us.step': 'final', 'us.latest_verdict': 'pass' }).orderBy('u.serial').offset(p.skip).limit(p.units).select('u.id')
      await trx('shipment_units').insert(passing.map((u: any) => ({ shipment_id: shipmentId, unit_id: u.id, added_at: new Date(released.getTime() - day) })))
      await issueCertificates(trx, { shipmentId: shipmentId!, issuedBy: quality.id, now: released, units: passing.map((u: any) => ({ unitId: Number(u.id) })) })
      await writeAudit(trx, { userId: quality.id, action: 'release', entity: 'shipment', entityId: p.code, before: { status: 'draft' }, after: { status: 'released', units: passing.length } })
    }
  })
}

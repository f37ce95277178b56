import type { Knex } from 'knex'
import { DEMO_CALIBRATION_FINDING, DEMO_LOTS, DEMO_PRODUCTS, DEMO_STATIONS, type DemoProduct } from '../../../fixtures/demo-catalogue'
import { generateRun, mulberry32, type GeneratedRun } from '../../../fixtures/run-generator'
import { addCalibration } from '../../services/calibration/history'
import { ingestBatch } from '../../services/ingest/ingest-batch'
import { changeLotStatus } from '../../services/lot-status'
import { createShipment } from '../../services/shipments/drafts'
import { addSerials } from '../../services/shipments/serials'
import { releaseShipment } from '../../services/shipments/release'
import { dispatchShipment } from '../../services/shipments/dispatch'
import type { Signature } from '../../utils/signature'

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
  'X8-2612-E': [6, 1],
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
  await seedDemoCalibrationFinding(db, now)
  // seeded history is old: a station was last seen when it finished its last seeded run, not when the seed ran
  await db.raw('UPDATE stations s SET last_seen_at = (SELECT MAX(r.finished_at) FROM test_runs r WHERE r.station_id = s.id)')
  return count
}

const DAY = 86_400_000

/**
 * The demo's shipments, made as quality makes them: the lots released, drafts filled from them, released with a
 * signature (which checks every unit and issues its certificates) and, for the doubler, dispatched, which ships
 * its lot. The tripler lot is split between both customers; the doubler lot went whole to Saltmarsh.
 */
async function seedDemoShipments(db: Knex, now: Date): Promise<void> {
  const quality = await db('users').where({ role: 'quality' }).first('id')
  const at = (daysAgo: number) => new Date(now.getTime() - daysAgo * DAY)
  const signed = (d: Date): Signature => ({ method: 'password', at: d.toISOString() })
  for (const [code, daysAgo] of [['D2-2611-A', 3], ['T3-2611-A', 2]] as const) {
    await changeLotStatus(db, quality.id, code, 'release', undefined, at(daysAgo), signed(at(daysAgo)))
  }
  const plan = [
    { lot: 'D2-2611-A', part: 'VFW-D2-250', customer: 'SALT', po: 'SGS-PO-88410', units: [0, Infinity], releasedDaysAgo: 2, dispatch: { carrier: 'Brackwater Couriers', trackingRef: 'BWC-77310-2611' } },
    { lot: 'T3-2611-A', part: 'VFW-T3-375', customer: 'QUILL', po: 'QRO-7731', units: [0, 24], releasedDaysAgo: 1 },
    { lot: 'T3-2611-A', part: 'VFW-T3-375', customer: 'SALT', po: 'SGS-PO-88522', units: [24, 48], releasedDaysAgo: 1 },
  ]
  for (const p of plan) {
    const customer = await db('customers').where({ code: p.customer }).first('id')
    const created = at(p.releasedDaysAgo + 0.5)
    const released = at(p.releasedDaysAgo)
    const { id } = await createShipment(db, quality.id, { customerId: customer.id, partNumber: p.part, customerPo: p.po }, created)
    // the seed writes history: the draft dates from before its release, not from the moment the seed ran
    await db('shipments').where({ id }).update({ created_at: created })
    const passing = await db('units as u').join('lots as l', 'l.id', 'u.lot_id').join('unit_steps as us', 'us.unit_id', 'u.id')
      .where({ 'l.code': p.lot, 'us.step': 'final', 'us.latest_verdict': 'pass' }).orderBy('u.serial').select('u.serial')
    const serials = passing.map((u: any) => u.serial as string).slice(p.units[0], p.units[1])
    await addSerials(db, quality.id, id, { lot: p.lot, serials }, created)
    await releaseShipment(db, quality.id, id, { signed: signed(released) }, released)
    if (p.dispatch) await dispatchShipment(db, quality.id, id, p.dispatch, at(p.releasedDaysAgo - 1))
  }
}

/** The doubler bay's analyser found out of tolerance after the shipments, entered as an engineer enters it: its review opens. */
async function seedDemoCalibrationFinding(db: Knex, now: Date): Promise<void> {
  const f = DEMO_CALIBRATION_FINDING
  const engineer = await db('users').where({ role: 'engineer' }).first('id')
  const instrument = await db('instruments').where({ asset_number: f.asset }).first('id')
  await addCalibration(db, engineer.id, instrument.id, {
    certificateNumber: f.certificate, laboratory: f.laboratory, asFound: 'out_of_tolerance',
    calibratedOn: new Date(now.getTime() - f.calibratedDaysAgo * DAY).toISOString(), dueAt: new Date(now.getTime() + f.dueInDays * DAY).toISOString(),
  }, now)
}

import { randomUUID } from 'node:crypto'
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createKnex, connectionFromEnv } from '../../server/database/connection'
import { ingestRun } from '../../server/services/ingest/ingest-run'
import { ingestBatch } from '../../server/services/ingest/ingest-batch'
import { lotSummary } from '../../server/services/analytics/lot-summary'
import { foldPendingStats } from '../../server/services/ingest/fold-param-stats'
import { validateRun } from '../../server/utils/run-validator'
import { DEMO_PRODUCTS } from '../../fixtures/demo-catalogue'
import { generateRun, mulberry32 } from '../../fixtures/run-generator'

let db: Knex
const tag = Date.now().toString(36)
const batchLot = `BAT-${tag}`
const singleLot = `ONE-${tag}`
const tripler = DEMO_PRODUCTS.find((p) => p.partNumber === 'VFW-T3-375')!
const batchResults: Awaited<ReturnType<typeof ingestBatch>> = []
const singleResults: unknown[] = []

function forLot(run: ReturnType<typeof generateRun>, lot: string) {
  return { ...run, id: randomUUID(), lot, serial: run.serial.replace('LOT', lot) }
}

beforeAll(async () => {
  db = createKnex(connectionFromEnv())
  const station = await db('stations').where({ name: 'ATE-T3-01' }).first('id', 'name')
  const rand = mulberry32(777)
  const base = Date.now() - 2 * 86_400_000
  const planned: ReturnType<typeof generateRun>[] = []
  for (let u = 0; u < 40; u++) {
    for (const [k, step] of ['tune', 'final'].entries()) {
      const t = new Date(base + u * 600_000 + k * 60_000)
      planned.push(generateRun({ product: tripler, lot: 'LOT', serial: `LOT-${u}`, step, startedAt: t, rand, failRate: 0.2, withTrace: step === 'final' }))
      if (rand() < 0.3) planned.push(generateRun({ product: tripler, lot: 'LOT', serial: `LOT-${u}`, step, startedAt: new Date(t.getTime() + 30_000), rand, failRate: 0.1 }))
    }
  }
  // late arrivals, so moving ranges see out-of-order starts too
  const order = planned.map((r, i) => ({ r, key: rand() < 0.2 ? rand() * planned.length : i })).sort((a, b) => a.key - b.key).map((x) => x.r)
  const viaBatch = order.map((r) => forLot(r, batchLot))
  const viaSingle = order.map((r) => forLot(r, singleLot))
  for (let i = 0; i < viaBatch.length; i += 60) batchResults.push(...await ingestBatch(db, station, viaBatch.slice(i, i + 60)))
  for (const run of viaSingle) {
    const v = validateRun(run)
    if (!v.ok) throw new Error(JSON.stringify(v.errors))
    singleResults.push(await ingestRun(db, station, v.value))
  }
}, 120_000)

afterAll(async () => { await db?.destroy() })

/**
 * Equal in shape and in every string and integer; other numbers equal to 1e-9 of their size. The two lots may be
 * folded in different slices by the server's folder, which moves the last bits of sums.
 */
function expectClose(a: any, b: any, path = ''): void {
  if (typeof a === 'number' && typeof b === 'number' && !(Number.isInteger(a) && Number.isInteger(b))) {
    if (Math.abs(a - b) > 1e-9 * Math.max(Math.abs(a), Math.abs(b))) throw new Error(`${path}: ${a} differs from ${b}`)
    return
  }
  if (a && b && typeof a === 'object' && typeof b === 'object') {
    expect(Object.keys(a), path).toEqual(Object.keys(b))
    for (const k of Object.keys(a)) expectClose(a[k], b[k], `${path}/${k}`)
    return
  }
  expect(a, path).toEqual(b)
}

const strip = (s: any, lot: string) => JSON.parse(JSON.stringify(s).replaceAll(lot, 'LOT'))

async function storedMeasurements(lot: string) {
  const rows = await db('measurements as m').join('test_runs as r', 'r.id', 'm.run_id').join('units as u', 'u.id', 'r.unit_id').join('lots as l', 'l.id', 'm.lot_id')
    .where('l.code', lot).orderBy(['u.serial', 'r.step', 'r.attempt', 'm.name', 'm.qualifier'])
    .select('u.serial', 'r.step', 'r.attempt', 'r.server_verdict', 'r.body_hash as _h', 'm.first_attempt', 'm.started_at', 'm.name', 'm.qualifier', 'm.value', 'm.unit',
      'm.uncertainty', 'm.lsl', 'm.usl', 'm.target', 'm.rule', 'm.guard_band', 'm.verdict', 'm.zone', 'm.derived', 'm.excess_db')
  return rows.map(({ _h, ...r }: any) => strip(r, lot))
}

describe('batch ingest against one by one', () => {
  it('answers every run as stored, with the same verdicts', () => {
    expect(batchResults.map((r) => r.status)).toEqual(singleResults.map((r: any) => r.status))
    expect(batchResults.every((r) => r.status === 201)).toBe(true)
    // the attempt answered is the run's place when it was stored: a late older run moves later ones up afterwards
    const view = (r: any) => { const { id, attempt, ...rest } = r.run; return strip(rest, r.run.lot) }
    expect(batchResults.map(view)).toEqual(singleResults.map(view))
    expect(batchResults.some((r: any) => r.run.attempt > 1)).toBe(true)
  })

  it('gives the same lot summary for both populations', async () => {
    for (const population of ['first', 'all'] as const) {
      const a = await lotSummary(db, batchLot, population)
      const b = await lotSummary(db, singleLot, population)
      expect(a).toBeDefined()
      expect(a!.steps.length).toBeGreaterThan(0)
      expectClose(strip(a, batchLot), strip(b, singleLot))
    }
  })

  it('stores the same measurements, unit steps and step counters', async () => {
    const a = await storedMeasurements(batchLot)
    expect(a.length).toBeGreaterThan(500)
    expect(a).toEqual(await storedMeasurements(singleLot))
    const unitSteps = (lot: string) => db('unit_steps as us').join('units as u', 'u.id', 'us.unit_id').join('lots as l', 'l.id', 'u.lot_id').join('test_runs as r', 'r.id', 'us.latest_run_id')
      .where('l.code', lot).orderBy(['u.serial', 'us.step']).select('u.serial', 'us.step', 'us.attempts', 'us.first_verdict', 'us.latest_verdict', 'r.attempt as latest_attempt')
      .then((rows) => rows.map((r: any) => strip(r, lot)))
    expect(await unitSteps(batchLot)).toEqual(await unitSteps(singleLot))
    const counters = (lot: string) => db('lot_step_stats as s').join('lots as l', 'l.id', 's.lot_id').where('l.code', lot).orderBy('s.step')
      .select('s.step', 's.runs', 's.units', 's.first_pass', 's.latest_pass')
    expect(await counters(batchLot)).toEqual(await counters(singleLot))
    // the server's folder may take either lot's queue in different slices, so sums can differ in the last bits:
    // counts and extremes must agree exactly, means and spreads to 1e-12 of their size
    const lotIds = (await db('lots').whereIn('code', [batchLot, singleLot]).select('id')).map((r: any) => r.id)
    await foldPendingStats(db, { lotIds })
    expect(await db('lot_stats_pending').whereIn('lot_id', lotIds).count({ n: '*' }).first()).toMatchObject({ n: 0 })
    const params = async (lot: string) => {
      const rows = await db('lot_param_stats as s').join('lots as l', 'l.id', 's.lot_id').where('l.code', lot).orderBy(['s.step', 's.name', 's.qualifier'])
        .select('s.step', 's.name', 's.qualifier', 's.n', 's.shift', 's.sum_d', 's.sumsq_d', 's.min_value', 's.max_value', 's.mr_n', 's.out_of_spec', 's.fail_all')
      return rows.map(({ shift, sum_d, sumsq_d, ...exact }: any) => ({
        exact,
        mean: exact.n ? shift + sum_d / exact.n : null,
        ss: exact.n ? sumsq_d - (sum_d * sum_d) / exact.n : null,
      }))
    }
    const [a2, b2] = [await params(batchLot), await params(singleLot)]
    expect(a2.map((r) => r.exact)).toEqual(b2.map((r) => r.exact))
    a2.forEach((r, i) => {
      const other = b2[i]!
      if (r.mean === null) return expect(other.mean).toBeNull()
      expect(Math.abs(r.mean - other.mean!)).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(r.mean)))
      expect(Math.abs(r.ss! - other.ss!)).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(r.ss!)))
    })
  })
})

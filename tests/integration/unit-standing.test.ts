// Each unit's standing on its row and the lot's unit counters, after shuffled arrivals (late runs, retests, several
// stations and steps, concurrent groups), equal a recomputation written here from the stored runs alone; so do they
// after a rebuild from the rows, and after a run's calibration flag is judged again.
import { randomUUID } from 'node:crypto'
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createKnex, connectionFromEnv } from '../../server/database/connection'
import { ingestRun } from '../../server/services/ingest/ingest-run'
import { ingestBatch } from '../../server/services/ingest/ingest-batch'
import { validateRun } from '../../server/utils/run-validator'
import { DEMO_PRODUCTS } from '../../fixtures/demo-catalogue'
import { generateRun, mulberry32 } from '../../fixtures/run-generator'

let db: Knex
const lotCode = `UST-${Date.now().toString(36)}`
const tripler = DEMO_PRODUCTS.find((p) => p.partNumber === 'VFW-T3-375')!
const STEPS = ['tune', 'burn-in', 'final']

beforeAll(async () => {
  db = createKnex(connectionFromEnv())
  const stations = await db('stations').whereIn('name', ['ATE-T3-01', 'ATE-T3-02', 'ATE-D2-01']).orderBy('name').select('id', 'name')
  expect(stations).toHaveLength(3)
  const rand = mulberry32(9137)
  const base = Date.now() - 2 * 86_400_000
  const planned: ReturnType<typeof generateRun>[] = []
  for (let u = 0; u < 40; u++) {
    const serial = `${lotCode}-${String(u).padStart(2, '0')}`
    // some units stop part way: incomplete; a few never reach the last step
    const reach = u % 7 === 0 ? 1 : u % 5 === 0 ? 2 : 3
    for (const [k, step] of STEPS.slice(0, reach).entries()) {
      const t = new Date(base + u * 600_000 + k * 60_000)
      planned.push(generateRun({ product: tripler, lot: lotCode, serial, step, startedAt: t, rand, failRate: 0.2 }))
      if (rand() < 0.3) planned.push(generateRun({ product: tripler, lot: lotCode, serial, step, startedAt: new Date(t.getTime() + 30_000), rand, failRate: 0.1 }))
      if (rand() < 0.1) planned.push(generateRun({ product: tripler, lot: lotCode, serial, step, startedAt: new Date(t.getTime() + 45_000), rand, failRate: 0 }))
    }
  }
  // arrival order differs from test order: late uploads, retests arriving before the first attempt
  const order = planned.map((r, i) => ({ r, key: rand() < 0.35 ? rand() * planned.length : i })).sort((a, b) => a.key - b.key).map((x) => x.r)
  let i = 0
  while (i < order.length) {
    const chunk = order.slice(i, i + 9)
    i += chunk.length
    if (i % 4 === 0) {
      // a batch: one station, one transaction
      const res = await ingestBatch(db, stations[i % 3]!, chunk)
      for (const r of res) expect([200, 201]).toContain((r as any).status)
      continue
    }
    // concurrent posts from several stations, written together by the group writer
    await Promise.all(chunk.map((run, k) => {
      const v = validateRun(run)
      if (!v.ok) throw new Error(JSON.stringify(v.errors))
      return ingestRun(db, stations[(i + k) % 3]!, v.value)
    }))
  }
}, 180_000)

afterAll(async () => { await db.destroy() })

type Run = { id: number; unit_id: number; station_id: number; step: string; uuid: string; started_at: Date; finished_at: Date; server_verdict: 'pass' | 'fail'; calibration_lapsed: number }

/** The standing of every unit and the lot's counts, computed from the lot's runs alone. */
async function recompute(lotId: number, productSteps: readonly string[] = STEPS) {
  const runs: Run[] = await db('test_runs').where({ lot_id: lotId }).select('id', 'unit_id', 'station_id', 'step', 'uuid', 'started_at', 'finished_at', 'server_verdict', 'calibration_lapsed')
  const units = await db('units').where({ lot_id: lotId }).select('id', 'serial')
  const testOrder = (a: Run, b: Run) => +a.started_at - +b.started_at || +a.finished_at - +b.finished_at || (a.uuid < b.uuid ? -1 : a.uuid > b.uuid ? 1 : 0)
  const expected = new Map<number, Record<string, unknown>>()
  for (const u of units) {
    const bySteps = new Map<string, Run[]>()
    for (const r of runs.filter((x) => x.unit_id === u.id)) bySteps.set(r.step, [...(bySteps.get(r.step) ?? []), r])
    const steps = [...bySteps.entries()].map(([step, list]) => {
      const sorted = [...list].sort(testOrder)
      return { step, attempts: sorted.length, first: sorted[0]!, latest: sorted.at(-1)! }
    })
    const anyFail = steps.some((s) => s.latest.server_verdict === 'fail')
    const atLast = steps.some((s) => s.step === productSteps.at(-1))
    const last = steps.length ? steps.reduce((a, b) => (b.latest.id > a.latest.id ? b : a)) : null
    const at = new Map(steps.map((s) => [s.step, s]))
    expected.set(u.id, {
      state: !steps.length ? 'untested' : anyFail ? 'fail' : atLast ? 'pass' : 'incomplete',
      completed: atLast ? 1 : 0,
      first_pass: steps.length ? (steps.some((s) => s.first.server_verdict === 'fail') ? 0 : 1) : null,
      steps_tested: steps.length,
      max_attempts: Math.max(0, ...steps.map((s) => s.attempts)),
      runs: steps.reduce((n, s) => n + s.attempts, 0),
      last_step: last?.step ?? null, last_station_id: last?.latest.station_id ?? null,
      last_tested_at: last ? new Date(last.latest.finished_at).toISOString() : null, latest_run_id: last?.latest.id ?? null,
      ready: productSteps.every((s) => at.get(s)?.latest.server_verdict === 'pass' && !at.get(s)!.latest.calibration_lapsed) ? 1 : 0,
      passed_all: !anyFail && productSteps.length > 0 && productSteps.every((s) => at.get(s)?.latest.server_verdict === 'pass') ? 1 : 0,
    })
  }
  const all = [...expected.values()]
  const count = (f: (x: Record<string, unknown>) => boolean) => all.filter(f).length
  const counts = {
    units: all.length, completed: count((x) => x.completed === 1), passed: count((x) => x.state === 'pass'), failed: count((x) => x.state === 'fail'),
    in_progress: count((x) => x.state === 'incomplete' || x.state === 'untested'), untested: count((x) => x.state === 'untested'),
    retested: count((x) => (x.max_attempts as number) > 1), not_ready: count((x) => x.ready === 0), passed_all: count((x) => x.passed_all === 1),
    first_run_at: new Date(Math.min(...runs.map((r) => +r.started_at))).toISOString(), last_run_at: new Date(Math.max(...runs.map((r) => +r.finished_at))).toISOString(),
  }
  return { expected, counts }
}

async function expectStoredEqualsRecomputation(code = lotCode, productSteps: readonly string[] = STEPS) {
  const lot = await db('lots').where({ code }).first('id')
  const { expected, counts } = await recompute(lot.id, productSteps)
  const rows = await db('units').where({ lot_id: lot.id }).select('id', ...Object.keys(expected.values().next().value!))
  expect(rows).toHaveLength(expected.size)
  for (const r of rows) {
    const got = { ...r, id: undefined, last_tested_at: r.last_tested_at ? new Date(r.last_tested_at).toISOString() : null, latest_run_id: r.latest_run_id == null ? null : Number(r.latest_run_id) }
    delete got.id
    expect({ id: r.id, ...got }).toEqual({ id: r.id, ...expected.get(r.id) })
  }
  const [sum] = await db('lot_unit_stats').where({ lot_id: lot.id }).select(
    ...['units', 'completed', 'passed', 'failed', 'in_progress', 'untested', 'retested', 'not_ready', 'passed_all'].map((c) => db.raw(`CAST(SUM(${c}) AS SIGNED) AS ${c}`)),
    db.raw('MIN(first_run_at) AS first_run_at'), db.raw('MAX(last_run_at) AS last_run_at'))
  expect({ ...Object.fromEntries(Object.entries(sum).map(([k, v]) => [k, v instanceof Date ? v.toISOString() : Number(v)])) }).toEqual(counts)
  return counts
}

describe('unit standings and lot unit counters', () => {
  it('equal a recomputation from the runs after shuffled, concurrent arrivals', async () => {
    const counts = await expectStoredEqualsRecomputation()
    // the scenario reaches every kind of unit it is meant to check
    expect(counts.failed).toBeGreaterThan(0)
    expect(counts.passed).toBeGreaterThan(0)
    expect(counts.in_progress).toBeGreaterThan(0)
    expect(counts.retested).toBeGreaterThan(0)
  })

  it('are rebuilt from the rows by rebuildLotAggregates', async () => {
    const { rebuildLotAggregates } = await import('../../server/services/analytics/rebuild-aggregates')
    const lot = await db('lots').where({ code: lotCode }).first('id')
    // spoil both, as a bulk load that wrote runs without them would leave them
    await db('units').where({ lot_id: lot.id }).update({ state: 'fail', runs: 99, ready: 1, last_station_id: null, latest_run_id: null })
    await db('lot_unit_stats').where({ lot_id: lot.id }).update({ units: 7, passed: -3, first_run_at: null })
    await rebuildLotAggregates(db, lot.id)
    await expectStoredEqualsRecomputation()
  })

  it('follow a latest run judged past its calibration due date and back', async () => {
    const { restandUnitsOfRuns } = await import('../../server/database/repositories/unit-standing')
    const lot = await db('lots').where({ code: lotCode }).first('id')
    const unit = await db('units').where({ lot_id: lot.id, ready: true }).orderBy('serial').first('id', 'latest_run_id')
    expect(unit).toBeTruthy()
    await db.transaction(async (trx) => {
      await trx('test_runs').where({ id: unit.latest_run_id }).update({ calibration_lapsed: true })
      await restandUnitsOfRuns(trx, [Number(unit.latest_run_id)])
    })
    const counts = await expectStoredEqualsRecomputation()
    expect((await db('units').where({ id: unit.id }).first('ready')).ready).toBe(0)
    await db.transaction(async (trx) => {
      await trx('test_runs').where({ id: unit.latest_run_id }).update({ calibration_lapsed: false })
      await restandUnitsOfRuns(trx, [Number(unit.latest_run_id)])
    })
    expect((await expectStoredEqualsRecomputation()).not_ready).toBe(counts.not_ready - 1)
  })

  it('give the lot header its counts and readiness', async () => {
    const { lotDetail } = await import('../../server/services/lot-views')
    const view = (await lotDetail(db, lotCode))!
    const lot = await db('lots').where({ code: lotCode }).first('id')
    const { counts } = await recompute(lot.id)
    expect(view.counts).toMatchObject({ units: counts.units, completed: counts.completed, passed: counts.passed, failed: counts.failed, inProgress: counts.in_progress, retested: counts.retested, firstRunAt: counts.first_run_at, lastRunAt: counts.last_run_at })
    expect(view.readiness).toEqual({ units: counts.units, notReady: counts.not_ready })
  })

  it('stream the CSV by keyset in batches smaller than the lot: every unit once, in the list\'s order', async () => {
    const { lotUnitsCsv } = await import('../../server/services/lot-views')
    const lot = await db('lots').where({ code: lotCode }).first('id')
    const rows = await db('units').where({ lot_id: lot.id }).select('serial', 'last_step', 'runs', 'last_tested_at', 'state')
    expect(rows.length).toBeGreaterThan(7 * 3)
    const cmp = (a: unknown, b: unknown) => (a === b ? 0 : a === null ? -1 : b === null ? 1 : (a as any) < (b as any) ? -1 : 1)
    // sorts with many ties (the step, the runs) and with NULLs: the keyset must carry on past a tie within a batch boundary
    for (const [sort, col, dir] of [['step', 'last_step', 'desc'], ['runs', 'runs', 'asc'], ['date', 'last_tested_at', 'asc'], ['serial', 'serial', 'desc'], ['verdict', 'state', 'asc']] as const) {
      const expected = [...rows].sort((a, b) => cmp(a[col] instanceof Date ? +a[col] : a[col], b[col] instanceof Date ? +b[col] : b[col]) || cmp(a.serial, b.serial)).map((r) => r.serial)
      if (dir === 'desc') expected.reverse()
      const { lines } = await lotUnitsCsv(db, lotCode, { sort, dir }, 7)
      let text = ''
      for await (const chunk of lines) text += chunk
      const serials = text.trimEnd().split('\r\n').slice(1).map((l) => l.split(',')[0])
      expect(serials, `${sort} ${dir}`).toEqual(expected)
    }
    await expect(lotUnitsCsv(db, 'NO-SUCH-LOT-UST', { sort: 'serial', dir: 'asc' })).rejects.toMatchObject({ status: 404 })
  })
})

describe('a change of the product\'s steps', () => {
  it('stands every unit of its lots again by the new steps', async () => {
    const { createProduct, changeProduct } = await import('../../server/services/catalogue')
    const { rebuildLotAggregates } = await import('../../server/services/analytics/rebuild-aggregates')
    const admin = await db('users').orderBy('id').first('id')
    const station = await db('stations').orderBy('id').first('id')
    const partNumber = `UST-${Date.now().toString(36)}`.toUpperCase()
    const product = await createProduct(db, admin.id, { partNumber, name: 'Standing check', multiplier: 3, inputHz: 125e6, steps: ['tune', 'final'] })
    const code = `${partNumber}-L`
    const [lotId] = await db('lots').insert({ product_id: product.id, code })
    // rows written as a bulk load would: runs and step rows, then a rebuild stands the units
    const t0 = Date.now() - 3600_000
    const units: [string, [string, 'pass' | 'fail'][]][] = [['A', [['tune', 'pass'], ['final', 'pass']]], ['B', [['tune', 'pass']]], ['C', [['tune', 'pass'], ['final', 'fail']]]]
    for (const [k, [serial, runs]] of units.entries()) {
      const [unitId] = await db('units').insert({ product_id: product.id, lot_id: lotId, serial: `${code}-${serial}` })
      for (const [j, [step, verdict]] of runs.entries()) {
        const at = new Date(t0 + k * 60_000 + j * 10_000)
        const [runId] = await db('test_runs').insert({
          uuid: randomUUID(), body_hash: '0'.repeat(64), unit_id: unitId, lot_id: lotId, station_id: station.id, step, attempt: 1,
          started_at: at, finished_at: new Date(+at + 5000), server_verdict: verdict,
        })
        await db('unit_steps').insert({ unit_id: unitId, step, attempts: 1, first_verdict: verdict, latest_verdict: verdict, latest_run_id: runId })
      }
    }
    await rebuildLotAggregates(db, lotId!)
    const before = await expectStoredEqualsRecomputation(code, ['tune', 'final'])
    expect(before).toMatchObject({ units: 3, passed: 1, failed: 1, in_progress: 1, not_ready: 2, passed_all: 1 })
    await changeProduct(db, admin.id, partNumber, { steps: ['tune', 'final', 'pack'] })
    const after = await expectStoredEqualsRecomputation(code, ['tune', 'final', 'pack'])
    // nothing has reached the new last step: no unit is complete, ready or passed every step any more
    expect(after).toMatchObject({ units: 3, completed: 0, passed: 0, failed: 1, in_progress: 2, not_ready: 3, passed_all: 0 })
  })
})

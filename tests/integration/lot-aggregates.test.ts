import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createKnex, connectionFromEnv } from '../../server/database/connection'
import { ingestRun } from '../../server/services/ingest/ingest-run'
import { foldPendingStats, freshenLotStats } from '../../server/services/ingest/fold-param-stats'
import { lotSummary } from '../../server/services/analytics/lot-summary'
import { validateRun } from '../../server/utils/run-validator'
import { DEMO_PRODUCTS } from '../../fixtures/demo-catalogue'
import { generateRun, mulberry32 } from '../../fixtures/run-generator'
import { capabilityFromValues, movingRangeSum, sigmaFromMovingRange } from '../../shared/utils/capability'
import { driftPer1000, slopeFromCentredSums } from '../../shared/utils/regression'
import { centredTrendSums } from '../../server/services/ingest/param-trend-merge'
import { parameterView } from '../../server/services/analytics/parameter-view'

let db: Knex
const lotCode = `AGG-${Date.now().toString(36)}`
const tripler = DEMO_PRODUCTS.find((p) => p.partNumber === 'VFW-T3-375')!

beforeAll(async () => {
  db = createKnex(connectionFromEnv())
  const stations = await db('stations').whereIn('name', ['ATE-T3-01', 'ATE-T3-02']).select('id', 'name')
  const rand = mulberry32(4242)
  const base = Date.now() - 3 * 86_400_000
  const planned: ReturnType<typeof generateRun>[] = []
  for (let u = 0; u < 36; u++) {
    const serial = `${lotCode}-${u}`
    for (const [k, step] of ['tune', 'burn-in', 'final'].entries()) {
      const t = new Date(base + u * 600_000 + k * 60_000)
      planned.push(generateRun({ product: tripler, lot: lotCode, serial, step, startedAt: t, rand, failRate: 0.15, withTrace: step === 'final' }))
      if (rand() < 0.2) planned.push(generateRun({ product: tripler, lot: lotCode, serial, step, startedAt: new Date(t.getTime() + 30_000), rand, failRate: 0 }))
    }
  }
  // arrival order differs from test order: late uploads from an offline buffer
  const order = planned.map((r, i) => ({ r, key: rand() < 0.25 ? rand() * planned.length : i })).sort((a, b) => a.key - b.key).map((x) => x.r)
  let i = 0
  for (const run of order) {
    const v = validateRun(run)
    if (!v.ok) throw new Error(JSON.stringify(v.errors))
    const station = stations[i++ % stations.length]
    await ingestRun(db, station, v.value)
  }
}, 120_000)

afterAll(async () => { await db.destroy() })

/** Each parameter and revision's values straight from the rows, in test order (start, then storage order). */
async function recompute(firstOnly: boolean, code = lotCode) {
  const lot = await db('lots').where({ code }).first('id')
  const q = db('measurements').where({ lot_id: lot.id, implausible: false }).orderBy('started_at').orderBy('id').select('step', 'name', 'qualifier', 'revision_id', 'station_id', 'value', 'lsl', 'usl')
  const rows = firstOnly ? await q.where('first_attempt', true) : await q
  const groups = new Map<string, { all: number[]; byStation: Map<number, number[]>; outOfSpec: number }>()
  for (const r of rows) {
    const k = `${r.step}|${r.name}|${r.qualifier}|${r.revision_id}`
    const g = groups.get(k) ?? { all: [], byStation: new Map(), outOfSpec: 0 }
    g.all.push(r.value)
    if ((r.lsl !== null && r.value < r.lsl) || (r.usl !== null && r.value > r.usl)) g.outOfSpec++
    const s = g.byStation.get(r.station_id) ?? []
    s.push(r.value)
    g.byStation.set(r.station_id, s)
    groups.set(k, g)
  }
  return groups
}

async function expectSummaryEqualsRecomputation(code: string, population: 'first' | 'all' = 'first') {
  const summary = (await lotSummary(db, code, population))!
  expect(summary.backlog).toBeNull()
  const groups = await recompute(population === 'first', code)
  expect(summary.capability.length).toBe(groups.size)
  for (const c of summary.capability) {
    const g = groups.get(`${c.step}|${c.name}|${c.qualifier}|${c.revisionId}`)!
    const full = capabilityFromValues(g.all, { lsl: c.lsl, usl: c.usl })
    let mrSum = 0
    let mrN = 0
    for (const values of g.byStation.values()) { const mr = movingRangeSum(values); mrSum += mr.sum; mrN += mr.count }
    const scale = Math.max(1, Math.abs(full.mean!))
    expect(c.n).toBe(full.n)
    expect(c.mean!).toBeCloseTo(full.mean!, 12 - Math.ceil(Math.log10(scale)))
    expect(c.sigmaOverall! / full.sigmaOverall!).toBeCloseTo(1, 9)
    expect(c.sigmaWithin! / sigmaFromMovingRange(mrSum, mrN)).toBeCloseTo(1, 9)
    if (c.cpk !== null) {
      const within = sigmaFromMovingRange(mrSum, mrN)
      const expected = Math.min(...[c.usl !== null ? (c.usl - full.mean!) / (3 * within) : Infinity, c.lsl !== null ? (full.mean! - c.lsl) / (3 * within) : Infinity])
      expect(c.cpk).toBeCloseTo(expected, 9)
    }
    expect(c.min).toBe(Math.min(...g.all))
    expect(c.max).toBe(Math.max(...g.all))
    expect(c.outOfSpec).toBe(g.outOfSpec)
  }
}

/** The drift sums of every parameter and revision, both populations, against a regression on the recomputed values. */
async function expectDriftSumsEqualRecomputation(code: string, trends: Knex = db) {
  const lot = await db('lots').where({ code }).first('id')
  for (const all of [false, true]) {
    const groups = await recompute(!all, code)
    const rows = await trends('lot_param_trend').where({ lot_id: lot.id, all_attempts: all })
    expect(rows.length).toBe(groups.size)
    for (const r of rows) {
      const values = groups.get(`${r.step}|${r.name}|${r.qualifier}|${r.revision_id}`)!.all
      expect([r.n, !!r.stale]).toEqual([values.length, false])
      const kept = slopeFromCentredSums(centredTrendSums({ n: r.n, sumRd: r.sum_rd, sumD: r.sum_d, sumSqD: r.sumsq_d }))
      const ref = driftPer1000(values)
      if (!ref) { expect(kept).toBeNull(); continue }
      // the two-pass regression over x = index / 1000 (linearRegression) gives the same line
      const tol = 1e-7 * (ref.slopeStdErr ?? Math.abs(ref.slope)) + 1e-12
      expect(Math.abs(kept!.slope - ref.slope)).toBeLessThanOrEqual(tol)
      if (ref.slopeInterval) expect(Math.abs(kept!.slopeInterval![0] - ref.slopeInterval[0])).toBeLessThanOrEqual(tol * 10)
    }
  }
}

/** The centred sums as the parameter view used to take them: numbering the values in SQL (ROW_NUMBER over test order). */
async function trendSumsBySql(lotId: number, k: { step: string; name: string; qualifier: number; revisionId: number }, firstOnly: boolean, n: number, centre: number) {
  const [rows] = await db.raw(`SELECT COUNT(*) AS n, SUM(dx * dx) AS sxx, SUM(dx * y) AS sxy, SUM(y) AS sy, SUM(y * y) AS syy FROM (
      SELECT value - ? AS y, (ROW_NUMBER() OVER (ORDER BY started_at, id) - 1 - ?) / 1000 AS dx FROM measurements
      WHERE lot_id = ? AND step = ? AND name = ? AND qualifier = ? AND revision_id = ? AND NOT implausible ${firstOnly ? 'AND first_attempt' : ''}) t`,
  [centre, (n - 1) / 2, lotId, k.step, k.name, k.qualifier, k.revisionId])
  const r = rows[0]
  return { n: Number(r.n), sxx: Number(r.sxx), sxy: Number(r.sxy), sy: Number(r.sy), syy: Number(r.syy) }
}

describe('incremental lot aggregates', () => {
  it('equal a full recomputation after retests and out-of-order arrival', async () => {
    await expectSummaryEqualsRecomputation(lotCode)
  })

  it('copies the lot, station, step, start and first-attempt flag of each run onto its measurements', async () => {
    const lot = await db('lots').where({ code: lotCode }).first('id')
    const [rows] = await db.raw(`SELECT COUNT(*) AS bad FROM measurements m JOIN test_runs r ON r.id = m.run_id
      WHERE r.lot_id = ? AND (m.started_at <> r.started_at OR m.lot_id <> r.lot_id OR m.station_id <> r.station_id OR m.step <> r.step
        OR m.first_attempt <> (r.attempt = 1))`, [lot.id])
    expect(Number(rows[0].bad)).toBe(0)
    expect(Number((await db('measurements').where({ lot_id: lot.id }).count({ n: '*' }).first() as any).n)).toBeGreaterThan(500)
  })

  it('keeps yields equal to counts over the stored runs', async () => {
    const summary = (await lotSummary(db, lotCode, 'first'))!
    const lot = await db('lots').where({ code: lotCode }).first('id')
    for (const s of summary.steps) {
      const runs = await db('test_runs as r').join('units as u', 'u.id', 'r.unit_id').where({ 'r.lot_id': lot.id, 'r.step': s.step })
        .select('r.unit_id', 'r.attempt', 'r.server_verdict')
      const units = new Set(runs.map((r: any) => r.unit_id))
      const firstPass = runs.filter((r: any) => r.attempt === 1 && r.server_verdict === 'pass').length
      const latest = new Map<number, any>()
      for (const r of runs) if (!latest.has(r.unit_id) || latest.get(r.unit_id).attempt < r.attempt) latest.set(r.unit_id, r)
      const finalPass = [...latest.values()].filter((r) => r.server_verdict === 'pass').length
      expect(s.units).toBe(units.size)
      expect(s.runs).toBe(runs.length)
      expect(s.firstPass).toBe(firstPass)
      expect(s.finalPass).toBe(finalPass)
    }
  })

  it('the all-attempts population, kept in the same rows, matches a recomputation too', async () => {
    await expectSummaryEqualsRecomputation(lotCode, 'all')
    // retests add values: the populations differ somewhere
    const [first, all] = [await recompute(true), await recompute(false)]
    expect([...all].some(([k, g]) => g.all.length > first.get(k)!.all.length)).toBe(true)
  })

  it('keeps drift sums in test order equal to a regression on the stored values, both populations', async () => {
    await expectDriftSumsEqualRecomputation(lotCode)
  })

  it('the parameter view reads moments and drift from the aggregates, equal to the SQL over the rows', async () => {
    const lot = await db('lots').where({ code: lotCode }).first('id')
    const params = await db('lot_param_trend').where({ lot_id: lot.id, all_attempts: true }).distinct('step', 'name', 'qualifier').limit(6)
    expect(params.length).toBeGreaterThan(0)
    for (const p of params) {
      for (const attempts of ['first', 'all'] as const) {
        const view = (await parameterView(db, { code: lotCode, step: p.step, name: p.name, qualifier: Number(p.qualifier), attempts, revision: null }))!
        const revisionId = view.parameter.revisionId
        const values = (await recompute(attempts === 'first')).get(`${p.step}|${p.name}|${p.qualifier}|${revisionId}`)!.all
        const full = capabilityFromValues(values, {})
        expect(view.n).toBe(values.length)
        expect(view.normal!.mean / full.mean!).toBeCloseTo(1, 12)
        expect(view.normal!.sigma / full.sigmaOverall!).toBeCloseTo(1, 9)
        expect([view.driftPending, view.backlog]).toEqual([false, null])
        const bySql = slopeFromCentredSums(await trendSumsBySql(lot.id, { ...p, qualifier: Number(p.qualifier), revisionId }, attempts === 'first', values.length, full.mean!))!
        expect(view.drift!.n).toBe(bySql.n)
        expect(Math.abs(view.drift!.slopePer1000 - bySql.slope)).toBeLessThanOrEqual(1e-7 * bySql.slopeStdErr!)
        expect(Math.abs(view.drift!.interval![1] - bySql.slopeInterval![1])).toBeLessThanOrEqual(1e-6 * bySql.slopeStdErr!)
      }
    }
  })
})

describe('rebuilding the aggregates from the stored rows', () => {
  it('gives the same lot summary as the incremental path', async () => {
    const { rebuildLotAggregates } = await import('../../server/services/analytics/rebuild-aggregates')
    const before = (await lotSummary(db, lotCode, 'first'))!
    const lot = await db('lots').where({ code: lotCode }).first('id')
    await rebuildLotAggregates(db, lot.id)
    const after = (await lotSummary(db, lotCode, 'first'))!
    expect(after.steps).toEqual(before.steps)
    expect(after.pareto).toEqual(before.pareto)
    expect(after.capability.length).toBe(before.capability.length)
    after.capability.forEach((c, i) => {
      const b = before.capability[i]!
      expect([c.step, c.name, c.qualifier, c.n, c.min, c.max]).toEqual([b.step, b.name, b.qualifier, b.n, b.min, b.max])
      expect(c.mean! / b.mean!).toBeCloseTo(1, 12)
      expect(c.sigmaOverall! / b.sigmaOverall!).toBeCloseTo(1, 9)
      expect(c.sigmaWithin! / b.sigmaWithin!).toBeCloseTo(1, 9)
    })
    await expectSummaryEqualsRecomputation(lotCode, 'all')
    await expectDriftSumsEqualRecomputation(lotCode)
  })
})

describe('the queue of runs awaiting the fold', () => {
  const code = `FOLD-${Date.now().toString(36)}`

  async function postRuns(count: number, seed: number, concurrency: number, lot = code) {
    const stations = await db('stations').whereIn('name', ['ATE-T3-01', 'ATE-T3-02']).select('id', 'name')
    const rand = mulberry32(seed)
    const base = Date.now() - 86_400_000 + seed * 1000
    const runs = Array.from({ length: count }, (_, u) => generateRun({ product: tripler, lot, serial: `${lot}-${seed}-${u}`, step: 'final', startedAt: new Date(base + u * 1000), rand, failRate: 0.1, withTrace: false }))
    let next = 0
    await Promise.all(Array.from({ length: concurrency }, async (_, w) => {
      while (next < runs.length) {
        const v = validateRun(runs[next++]!)
        if (!v.ok) throw new Error(JSON.stringify(v.errors))
        await ingestRun(db, stations[w % stations.length], v.value)
      }
    }))
  }

  it('folds runs stored concurrently with background folds into rows equal to a recomputation', async () => {
    let storing = true
    // folds only this lot: other test files running beside this one compare their own lots' fold results exactly
    const folder = (async () => {
      while (storing) {
        const lot = await db('lots').where({ code }).first('id')
        if (lot) await foldPendingStats(db, { lotIds: [lot.id], background: true })
        await new Promise((r) => setTimeout(r, 5))
      }
    })()
    await postRuns(80, 1, 8)
    storing = false
    await folder
    await expectSummaryEqualsRecomputation(code)
    await expectSummaryEqualsRecomputation(code, 'all')
    await expectDriftSumsEqualRecomputation(code)
    const lot = await db('lots').where({ code }).first('id')
    expect(await db('lot_stats_pending').where({ lot_id: lot.id }).count({ n: '*' }).first()).toMatchObject({ n: 0 })
  })

  /** Holds the lot's fold lease in a transaction of its own while `work` runs, as a fold in progress would. */
  async function holdingLease<T>(lotCode: string, work: (hold: Knex.Transaction, lotId: number) => Promise<T>): Promise<T> {
    // the lot comes into being with its first run
    await postRuns(1, 90 + lotCode.length, 1, lotCode)
    const lot = await db('lots').where({ code: lotCode }).first('id')
    return db.transaction(async (hold) => {
      const { ensureFoldLease, takeFoldLease } = await import('../../server/database/repositories/fold-leases')
      await ensureFoldLease(db, lot.id)
      expect(await takeFoldLease(hold, lot.id, 5)).toBe('taken')
      return work(hold, lot.id)
    })
  }

  it('puts values a few runs late in their place at fold time, leaving nothing to repair', async () => {
    // two stations side by side: each posts in its own order, but one's runs arrive after later runs of the other
    const late = `${code}-T`
    const stations = await db('stations').whereIn('name', ['ATE-T3-01', 'ATE-T3-02']).orderBy('name').select('id', 'name')
    const rand = mulberry32(77)
    const base = Date.now() - 40 * 3_600_000
    const post = async (u: number, station: { id: number; name: string }) => {
      const v = validateRun(generateRun({ product: tripler, lot: late, serial: `${late}-${u}`, step: 'final', startedAt: new Date(base + u * 1000), rand, failRate: 0.1, withTrace: false }))
      if (!v.ok) throw new Error(JSON.stringify(v.errors))
      await ingestRun(db, station, v.value)
    }
    const { queuedRunsOfLot, valuesOfRuns, forgetQueuedRuns } = await import('../../server/database/repositories/param-stats')
    const { foldTrendValues } = await import('../../server/services/ingest/param-trend-fold')
    const { inTimeOrder } = await import('../../server/services/ingest/param-stats-merge')
    // the drift part of two folds, by hand under the lot's lease, then undone: the second's values are all late
    const undone = new Error('undone')
    await expect(holdingLease(late, async (hold, lotId) => {
      const foldDrift = async () => {
        const ids = await queuedRunsOfLot(hold, lotId, 500)
        await foldTrendValues(hold, lotId, (await valuesOfRuns(hold, ids)).sort((x, y) => inTimeOrder(x.value, y.value)))
        await forgetQueuedRuns(hold, ids)
      }
      for (let u = 100; u < 140; u += 2) await post(u, stations[0]!)
      await foldDrift()
      for (let u = 101; u < 140; u += 2) await post(u, stations[1]!)
      await foldDrift()
      expect(await hold('lot_stats_repair').where({ lot_id: lotId }).count({ n: '*' }).first()).toMatchObject({ n: 0 })
      await expectDriftSumsEqualRecomputation(late, hold)
      throw undone
    })).rejects.toBe(undone)
    // and through the fold itself
    const lot = await db('lots').where({ code: late }).first('id')
    await foldPendingStats(db, { lotIds: [lot.id] })
    await expectDriftSumsEqualRecomputation(late)
    await expectSummaryEqualsRecomputation(late)
  })

  it('a rebuild leaves queued runs to the fold, which then counts them once', async () => {
    const lotCode = `${code}-R`
    // holding the lot's lease keeps a server running beside this test from folding the runs first
    await holdingLease(lotCode, async (hold, lotId) => {
      await postRuns(20, 2, 4, lotCode)
      const queued = await db('lot_stats_pending').where({ lot_id: lotId }).count({ n: '*' }).first()
      expect(Number((queued as any).n)).toBeGreaterThanOrEqual(20)
      const { rebuildLotAggregatesIn } = await import('../../server/services/analytics/rebuild-aggregates')
      await rebuildLotAggregatesIn(hold, lotId)
    })
    // the summary folds the queued runs (unless a background folder got there first) and must count them once
    await expectSummaryEqualsRecomputation(lotCode)
    await expectSummaryEqualsRecomputation(lotCode, 'all')
    await expectDriftSumsEqualRecomputation(lotCode)
  })

  const queuedIn = async (lotCode: string) => {
    const lot = await db('lots').where({ code: lotCode }).first('id')
    return Number(((await db('lot_stats_pending').where({ lot_id: lot.id }).count({ n: '*' }).first()) as any).n)
  }

  it('a background fold gives way to a fold in progress, and a reader waits for it', async () => {
    const waiting = `${code}-W`
    let reader: Promise<void> | undefined
    await holdingLease(waiting, async (_hold, lotId) => {
      await postRuns(6, 3, 2, waiting)
      expect(await foldPendingStats(db, { lotIds: [lotId], background: true })).toBe(0)
      let done = false
      reader = freshenLotStats(db, [lotId], 5000).then(() => { done = true })
      await new Promise((r) => setTimeout(r, 400))
      expect(done).toBe(false)
      expect(await queuedIn(waiting)).toBeGreaterThanOrEqual(6)
    })
    await reader
    expect(await queuedIn(waiting)).toBe(0)
    await expectSummaryEqualsRecomputation(waiting)
  })

  it('a reader stops waiting on a long fold of its lot and says which stored runs its figures leave out', async () => {
    const held = `${code}-L`
    await holdingLease(held, async () => {
      await postRuns(4, 5, 1, held)
      // the lease stays held past the reader's wait: it reads the rows as they are instead of failing
      const summary = (await lotSummary(db, held, 'first'))!
      expect(summary.backlog!.runs).toBeGreaterThanOrEqual(4)
      expect(Date.parse(summary.backlog!.asOf)).toBeLessThanOrEqual(Date.now())
    })
    await expectSummaryEqualsRecomputation(held)
  })

  it('a reader with a short wait answers while a fold of its lot holds the lease, saying what it leaves out', async () => {
    const busy = `${code}-B`
    await holdingLease(busy, async (_hold, lotId) => {
      await postRuns(5, 7, 1, busy)
      // returns although the lease is never let go meanwhile: a view does not queue behind a background slice
      const [backlog] = await freshenLotStats(db, [lotId], 100)
      expect(backlog!.runs).toBeGreaterThanOrEqual(5)
      expect(await queuedIn(busy)).toBeGreaterThanOrEqual(5)
    })
    await expectSummaryEqualsRecomputation(busy)
  })

  it('folds of different lots do not wait for each other', async () => {
    const held = `${code}-H`
    const other = `${code}-O`
    await holdingLease(held, async () => {
      await postRuns(5, 4, 1, other)
      const lot = await db('lots').where({ code: other }).first('id')
      // the other lot's reader folds at once although a fold of the held lot is in progress
      await freshenLotStats(db, [lot.id])
      expect(await queuedIn(other)).toBe(0)
    })
    await expectSummaryEqualsRecomputation(other)
  })

  it('readers folding new lots side by side count every run once', async () => {
    // fresh lots: every fold inserts new statistics rows, next to each other in the table
    const lots = Array.from({ length: 8 }, (_, i) => `${code}-N${i}`)
    await Promise.all(lots.map((lot, i) => postRuns(3, 20 + i, 1, lot)))
    const ids = await Promise.all(lots.map(async (c) => (await db('lots').where({ code: c }).first('id')).id as number))
    await Promise.all(ids.map((id) => freshenLotStats(db, [id])))
    for (const lot of lots) {
      expect(await queuedIn(lot)).toBe(0)
      await expectSummaryEqualsRecomputation(lot)
    }
  })
})

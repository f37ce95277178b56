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

async function recompute(firstOnly: boolean, code = lotCode) {
  const lot = await db('lots').where({ code }).first('id')
  const q = db('measurements').where({ lot_id: lot.id, implausible: false }).orderBy('started_at').orderBy('id').select('step', 'name', 'qualifier', 'revision_id', 'station_id', 'value')
  const rows = firstOnly ? await q.where('first_attempt', true) : await q
  const groups = new Map<string, { all: number[]; byStation: Map<number, number[]> }>()
  for (const r of rows) {
    const k = `${r.step}|${r.name}|${r.qualifier}|${r.revision_id}`
    const g = groups.get(k) ?? { all: [], byStation: new Map() }
    g.all.push(r.value)
    const s = g.byStation.get(r.station_id) ?? []
    s.push(r.value)
    g.byStation.set(r.station_id, s)
    groups.set(k, g)
  }
  return groups
}

async function expectSummaryEqualsRecomputation(code: string) {
  const summary = (await lotSummary(db, code, 'first'))!
  const groups = await recompute(true, code)
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
  }
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

  it('the all-attempts population matches a recomputation too', async () => {
    const summary = (await lotSummary(db, lotCode, 'all'))!
    const groups = await recompute(false)
    for (const c of summary.capability) {
      const g = groups.get(`${c.step}|${c.name}|${c.qualifier}|${c.revisionId}`)!
      expect(c.n).toBe(g.all.length)
      const full = capabilityFromValues(g.all, { lsl: c.lsl, usl: c.usl })
      expect(c.sigmaOverall! / full.sigmaOverall!).toBeCloseTo(1, 9)
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
      reader = freshenLotStats(db, [lotId]).then(() => { done = true })
      await new Promise((r) => setTimeout(r, 400))
      expect(done).toBe(false)
      expect(await queuedIn(waiting)).toBeGreaterThanOrEqual(6)
    })
    await reader
    expect(await queuedIn(waiting)).toBe(0)
    await expectSummaryEqualsRecomputation(waiting)
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

// The fine bins the fold keeps (lot_param_bins) against a recount from the stored rows, and the views read from them
// (parameter histogram, phase-noise percentiles) against the rows themselves.
import fc from 'fast-check'
import type { Knex } from 'knex'
import mysql from 'mysql2/promise'
import { quantileSorted as ssQuantileSorted } from 'simple-statistics'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createKnex, connectionFromEnv } from '../../server/database/connection'
import { numberLiteral } from '../../server/database/sql-literals'
import { ingestRun } from '../../server/services/ingest/ingest-run'
import { foldPendingStats, freshenLotStats } from '../../server/services/ingest/fold-param-stats'
import { rebuildLotAggregates, rebuildLotAggregatesIn } from '../../server/services/analytics/rebuild-aggregates'
import { ensureFoldLease, takeFoldLease } from '../../server/database/repositories/fold-leases'
import { lotPhaseNoise } from '../../server/services/analytics/phase-noise'
import { parameterView } from '../../server/services/analytics/parameter-view'
import { validateRun } from '../../server/utils/run-validator'
import { DEMO_PRODUCTS } from '../../fixtures/demo-catalogue'
import { generateRun, mulberry32 } from '../../fixtures/run-generator'
import { binExponent, binOf, binSql, FINE_BINS } from '../../shared/utils/fine-bins'

let db: Knex
let lotId: number
let stations: { id: number; name: string }[]
const lotCode = `BIN-${Date.now().toString(36)}`
const tripler = DEMO_PRODUCTS.find((p) => p.partNumber === 'VFW-T3-375')!
const base = Date.now() - 3 * 86_400_000
const rand = mulberry32(777)
let posted = 0
let grown = 0

async function post(run: ReturnType<typeof generateRun>) {
  const v = validateRun(run)
  if (!v.ok) throw new Error(JSON.stringify(v.errors))
  await ingestRun(db, stations[posted++ % stations.length]!, v.value)
}

beforeAll(async () => {
  db = createKnex(connectionFromEnv())
  stations = await db('stations').whereIn('name', ['ATE-T3-01', 'ATE-T3-02']).select('id', 'name')
  const planned: ReturnType<typeof generateRun>[] = []
  for (let u = 0; u < 40; u++) {
    const serial = `${lotCode}-${u}`
    for (const [k, step] of ['tune', 'final'].entries()) {
      const t = new Date(base + u * 600_000 + k * 60_000)
      planned.push(generateRun({ product: tripler, lot: lotCode, serial, step, startedAt: t, rand, failRate: 0.15, withTrace: step === 'final' }))
      if (rand() < 0.25) planned.push(generateRun({ product: tripler, lot: lotCode, serial, step, startedAt: new Date(t.getTime() + 30_000), rand, failRate: 0 }))
    }
  }
  // arrival order differs from test order (late uploads from an offline buffer), and the lot is folded now and then
  // while runs arrive, so bins are added to in slices and coarsened as the values spread
  const order = planned.map((r, i) => ({ r, key: rand() < 0.3 ? rand() * planned.length : i })).sort((a, b) => a.key - b.key).map((x) => x.r)
  const exponents = async () => new Map((await db('lot_param_bin_groups').where({ lot_id: lotId })).map((g: any) => [`${g.step}|${g.name}|${g.qualifier}|${g.revision_id}`, g.exponent]))
  let early = new Map()
  for (const [i, run] of order.entries()) {
    await post(run)
    if (i === 0) lotId = (await db('lots').where({ code: lotCode }).first('id')).id
    if (i % 17 === 16) await foldPendingStats(db, { lotIds: [lotId] })
    if (i === 16) early = await exponents()
  }
  await freshenLotStats(db, [lotId])
  // groups whose values spread after the first fold had their bins merged to a coarser exponent
  for (const [k, e] of await exponents()) if (early.has(k) && e > early.get(k)) grown++
  // three units get a run tested before their folded first one: it becomes attempt 1, and the fold recounts
  for (let u = 0; u < 3; u++) {
    await post(generateRun({ product: tripler, lot: lotCode, serial: `${lotCode}-${u}`, step: 'final', startedAt: new Date(base + u * 600_000), rand, failRate: 0, withTrace: true }))
  }
  expect(Number(((await db('lot_stats_rebuild').where({ lot_id: lotId }).count({ n: '*' }).first()) as any).n)).toBeGreaterThan(0)
  await freshenLotStats(db, [lotId])
}, 180_000)

afterAll(async () => { await db.destroy() })

const sortedRows = (rows: any[]) => rows.map((r) => `${r.step}|${r.name}|${Number(r.qualifier)}|${Number(r.revision_id)}|${Number(r.k)}|${Number(r.n_first)}|${Number(r.n_all)}`).sort()

/** The kept bins equal a recount of the stored rows at each group's exponent, for both populations. */
async function expectBinsEqualRows(lotId: number) {
  const [extremes] = await db.raw(`SELECT step, name, qualifier, revision_id, MIN(value) AS mn, MAX(value) AS mx FROM measurements
    WHERE lot_id = ? AND NOT implausible GROUP BY step, name, qualifier, revision_id`, [lotId])
  const groups = await db('lot_param_bin_groups').where({ lot_id: lotId })
  expect(groups.length).toBe(extremes.length)
  for (const x of extremes as any[]) {
    const g = groups.find((r: any) => r.step === x.step && r.name === x.name && Number(r.qualifier) === Number(x.qualifier) && Number(r.revision_id) === Number(x.revision_id))
    expect(g, `${x.step} ${x.name} ${x.qualifier}`).toBeDefined()
    expect([g.min_value, g.max_value]).toEqual([x.mn, x.mx])
    // the exponent follows from the extremes alone, whatever order the values came in
    expect(g.exponent).toBe(binExponent(x.mn, x.mx))
  }
  const [want] = await db.raw(`SELECT m.step, m.name, m.qualifier, m.revision_id, FLOOR(m.value / POW(2, g.exponent)) AS k,
      SUM(m.first_attempt) AS n_first, COUNT(*) AS n_all
    FROM measurements m JOIN lot_param_bin_groups g
      ON g.lot_id = m.lot_id AND g.step = m.step AND g.name = m.name AND g.qualifier = m.qualifier AND g.revision_id = m.revision_id
    WHERE m.lot_id = ? AND NOT m.implausible GROUP BY m.step, m.name, m.qualifier, m.revision_id, k`, [lotId])
  const got = await db('lot_param_bins').where({ lot_id: lotId }).select('step', 'name', 'qualifier', 'revision_id', 'k', 'n_first', 'n_all')
  expect(sortedRows(got)).toEqual(sortedRows(want))
  // about 512 bins over each group's span at most
  const [spread] = await db.raw('SELECT MAX(k) - MIN(k) + 1 AS bins FROM lot_param_bins WHERE lot_id = ? GROUP BY step, name, qualifier, revision_id', [lotId])
  for (const s of spread as any[]) expect(Number(s.bins)).toBeLessThanOrEqual(FINE_BINS + 1)
}

async function sampleOf(name: string, qualifier: number, revisionId: number, firstOnly = true): Promise<number[]> {
  const q = db('measurements').where({ lot_id: lotId, step: 'final', name, qualifier, revision_id: revisionId, implausible: false })
  if (firstOnly) q.where('first_attempt', true)
  return (await q.select('value')).map((r: any) => Number(r.value)).sort((a: number, b: number) => a - b)
}

const countIn = (values: number[], lo: number, hi: number) => values.filter((v) => lo <= v && v < hi).length

describe('fine bins kept by the fold', () => {
  it('equal a recount of the rows (GROUP BY FLOOR(value / 2^e)) after shuffled arrivals, retests and late first attempts', async () => {
    expect(grown).toBeGreaterThan(0)
    await expectBinsEqualRows(lotId)
  })

  it('give phase-noise percentiles within one fine width of the sample quantiles (type 7, simple-statistics)', async () => {
    const view = await lotPhaseNoise(db, lotCode, { step: 'final', revision: null })
    const measured = view.offsets.filter((o) => o.n > 0)
    expect(measured.length).toBe(tripler.referenceNoise.length)
    for (const o of measured) {
      const xs = await sampleOf('phase_noise', o.offsetHz, view.revisionId)
      expect([o.n, o.min, o.max]).toEqual([xs.length, xs[0], xs.at(-1)])
      const w = o.resolution!
      // the width is what the design promises: at most 2·span/512 (or 2^−49 of the largest magnitude)
      expect(w).toBeLessThanOrEqual(Math.max(2 * (xs.at(-1)! - xs[0]!) / FINE_BINS, 2 ** -49 * Math.max(Math.abs(xs[0]!), Math.abs(xs.at(-1)!))))
      expect(Math.abs(o.p10! - ssQuantileSorted(xs, 0.1))).toBeLessThanOrEqual(w)
      expect(Math.abs(o.median! - ssQuantileSorted(xs, 0.5))).toBeLessThanOrEqual(w)
      expect(Math.abs(o.p90! - ssQuantileSorted(xs, 0.9))).toBeLessThanOrEqual(w)
    }
    const j = view.jitter!
    expect(j).not.toBeNull()
    const js = await sampleOf('integrated_jitter', 0, view.revisionId)
    expect([j.n, j.min, j.max]).toEqual([js.length, js[0], js.at(-1)])
    expect(j.mean / (js.reduce((s, x) => s + x, 0) / js.length)).toBeCloseTo(1, 12)
    for (const [p, got] of [[0.1, j.percentiles.p10], [0.5, j.percentiles.p50], [0.9, j.percentiles.p90]] as const) {
      expect(Math.abs(got - ssQuantileSorted(js, p))).toBeLessThanOrEqual(j.resolution)
    }
    // each bar counts exactly the values within its edges
    const h = j.histogram
    expect(h.edges).toHaveLength(h.counts.length + 1)
    h.counts.forEach((c, i) => expect(c).toBe(countIn(js, h.edges[i]!, h.edges[i + 1]!)))
    expect(h.counts.reduce((s, c) => s + c, 0)).toBe(js.length)
  })

  it('give the parameter histogram exact counts for its edges, for first attempts and for all attempts', async () => {
    for (const attempts of ['first', 'all'] as const) {
      const v = (await parameterView(db, { code: lotCode, name: 'output_power', step: 'final', qualifier: 0, attempts, revision: null }))!
      const xs = await sampleOf('output_power', 0, v.parameter.revisionId, attempts === 'first')
      const h = v.histogram!
      expect(h.counts.length).toBeLessThanOrEqual(30)
      expect(h.edges[0]!).toBeLessThanOrEqual(Math.min(xs[0]!, v.parameter.lsl ?? Infinity))
      expect(h.edges.at(-1)!).toBeGreaterThan(Math.max(xs.at(-1)!, v.parameter.usl ?? -Infinity))
      h.counts.forEach((c, i) => expect(c).toBe(countIn(xs, h.edges[i]!, h.edges[i + 1]!)))
      expect(h.counts.reduce((s, c) => s + c, 0)).toBe(v.n)
      expect(v.n).toBe(xs.length)
    }
  })

  it('are the same after rebuildLotAggregates recounts the lot from its rows', async () => {
    const before = await db('lot_param_bins').where({ lot_id: lotId }).select('step', 'name', 'qualifier', 'revision_id', 'k', 'n_first', 'n_all')
    const view = await lotPhaseNoise(db, lotCode, { step: 'final', revision: null })
    await rebuildLotAggregates(db, lotId)
    await expectBinsEqualRows(lotId)
    const after = await db('lot_param_bins').where({ lot_id: lotId }).select('step', 'name', 'qualifier', 'revision_id', 'k', 'n_first', 'n_all')
    expect(sortedRows(after)).toEqual(sortedRows(before))
    expect(await lotPhaseNoise(db, lotCode, { step: 'final', revision: null })).toEqual(view)
  })
})

describe('a rebuild while runs wait for the fold', () => {
  it('leaves the queued runs to the fold, which then counts them once', async () => {
    const code = `${lotCode}-Q`
    const runs = (from: number, count: number) => Array.from({ length: count }, (_, u) => generateRun({
      product: tripler, lot: code, serial: `${code}-${from + u}`, step: 'final', startedAt: new Date(base + (from + u) * 60_000), rand, failRate: 0.1, withTrace: true,
    }))
    for (const run of runs(0, 6)) await post(run)
    const id = (await db('lots').where({ code }).first('id')).id as number
    await freshenLotStats(db, [id])
    await ensureFoldLease(db, id)
    // holding the lot's lease, as a fold in progress would, keeps any other folder off the runs posted meanwhile
    await db.transaction(async (hold) => {
      expect(await takeFoldLease(hold, id, 5)).toBe('taken')
      // values far from the first ones: the fold must coarsen the rebuilt groups when it adds them
      for (const run of runs(6, 8)) await post({ ...run, measurements: run.measurements.map((m: any) => m.name === 'output_power' ? { ...m, value: m.value - 3 } : m) })
      expect(Number(((await db('lot_stats_pending').where({ lot_id: id }).count({ n: '*' }).first()) as any).n)).toBe(8)
      await rebuildLotAggregatesIn(hold, id)
    })
    await freshenLotStats(db, [id])
    await expectBinsEqualRows(id)
  })
})

describe('the bin of a value in SQL and in the fold', () => {
  // awkward doubles: negatives, exact bin edges and the double just below one, the smallest and largest magnitudes
  const awkward = [0, -0.5, 0.5, -1, 1, -150.25, -150.26, 0.1, -0.1, 1e-15, -1e-15, 4.5e-14, 375e6 + 0.1, -(2 ** 52), 2 ** 52 + 2,
    Number.MIN_VALUE, -Number.MIN_VALUE, 2 ** -1022, -(2 ** -1022), 1e300, -1e300, 1.7e308, -1.7e308,
    // a double the text protocol prints with too few digits (954599.223614126)
    954599.2236141261]

  async function compare(pairs: { v: number; e: number }[]) {
    // read back through the binary protocol (a prepared statement): doubles arrive as their 8 bytes, whereas the
    // text protocol prints some of them with fewer digits than they need
    const table = `bin_probe_${Date.now().toString(36)}${Math.floor(Math.random() * 1e6)}`
    await db.raw(`CREATE TABLE ${table} (i INT PRIMARY KEY, v DOUBLE NOT NULL, e SMALLINT NOT NULL)`)
    const conn = await mysql.createConnection({ ...connectionFromEnv(), timezone: 'Z' })
    try {
      // written as the fold's statements write measurements: a literal per value
      for (let i = 0; i < pairs.length; i += 500) {
        await db.raw(`INSERT INTO ${table} (i, v, e) VALUES ${pairs.slice(i, i + 500).map((p, j) => `(${i + j},${numberLiteral(p.v)},${p.e})`).join(',')}`)
      }
      const [rows] = await conn.execute(`SELECT i, v, FLOOR(v / POW(2, e)) AS plain, ${binSql('v', 'e')} AS kept FROM ${table} WHERE i >= ? ORDER BY i`, [0])
      expect((rows as any[]).length).toBe(pairs.length)
      for (const r of rows as any[]) {
        const { v, e } = pairs[r.i]!
        expect(Number(r.v) + 0, `stored ${v}`).toBe(v + 0)
        expect(Number(r.kept) + 0, `bin of ${v} at ${e}`).toBe(binOf(v, e))
        // away from underflow, the plain expression of the rebuild agrees with JavaScript's floor too
        if (v / 2 ** e !== 0 || v === 0) expect(Number(r.plain) + 0, `floor of ${v} at ${e}`).toBe(Math.floor(v / 2 ** e) + 0)
      }
    } finally {
      await conn.end()
      await db.raw(`DROP TABLE ${table}`)
    }
  }

  it('agrees on awkward values at exponents across the range, edges included', async () => {
    const pairs: { v: number; e: number }[] = []
    for (const e of [-1022, -300, -60, -52, -8, -1, 0, 3, 40, 300, 1016]) {
      for (const v of awkward) if (Math.abs(v / 2 ** e) < 2 ** 53) pairs.push({ v, e })
      // exact edges of bins and the double just below each
      for (const k of [-7, -2, -1, 1, 2, 5]) {
        const edge = k * 2 ** e
        pairs.push({ v: edge, e }, { v: edge - Math.abs(edge) * Number.EPSILON, e })
      }
    }
    await compare(pairs)
  })

  it('agrees on generated values at the exponent of their group', async () => {
    const values = fc.sample(fc.double({ min: -1e300, max: 1e300, noNaN: true }), 1500)
    const pairs = fc.sample(fc.tuple(fc.constantFrom(...values), fc.constantFrom(...values), fc.constantFrom(...values)), 1500).map(([a, b, v]) => {
      const lo = Math.min(a, b, v)
      const hi = Math.max(a, b, v)
      return { v, e: binExponent(lo, hi) }
    })
    await compare(pairs)
  })
})

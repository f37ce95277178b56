// The dashboard bench's bulk loader writes what the write path would: every measurement judged by the revision in
// force at its run's start as the decision rule judges it, run verdicts from their measurements, unit step rows from
// the runs, and retests that make first and all attempts differ.
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createKnex, connectionFromEnv } from '../../server/database/connection'
import { judge } from '../../shared/utils/decision'
import { DEMO_PRODUCTS } from '../../fixtures/demo-catalogue'
import { growLot, measurementsPerUnit, type DashLot } from '../../scripts/lib/dash-load'

let db: Knex
const tag = Date.now().toString(36).toUpperCase()
const tripler = DEMO_PRODUCTS.find((p) => p.partNumber === 'VFW-T3-375')!
const WANT = 6000
let lot: DashLot

/** A fresh copy of the tripler with its catalogue limits as revision 1 and tighter final output power as revision 2. */
async function freshPart(base: number, splitAt: number): Promise<{ productId: number; first: number; second: number }> {
  const [productId] = await db('products').insert({
    part_number: `BDL-${tag}`, name: 'Bench loader tripler', multiplier: 3, input_hz: 125e6, output_hz: 375e6, steps: JSON.stringify(tripler.steps),
  })
  const ids: number[] = []
  for (const [revision, at] of [[1, base - 86_400], [2, splitAt]] as const) {
    const [id] = await db('spec_revisions').insert({ product_id: productId, revision, status: revision === 1 ? 'superseded' : 'approved', effective_at: new Date(at * 1000), approved_at: new Date(at * 1000) })
    await db('spec_limits').insert(tripler.limits.map((l) => {
      const tighter = revision === 2 && l.step === 'final' && l.name === 'output_power'
      return {
        revision_id: id, step: l.step, name: l.name, qualifier: l.qualifier ?? 0, lsl: tighter ? 6.2 : l.lsl ?? null, usl: tighter ? 7.8 : l.usl ?? null,
        target: l.target ?? null, unit: l.unit, required: l.required ?? true, rule: l.rule ?? 'simple', default_uncertainty: l.defaultUncertainty ?? null,
      }
    }))
    ids.push(id!)
  }
  return { productId: productId!, first: ids[0]!, second: ids[1]! }
}

beforeAll(async () => {
  db = createKnex(connectionFromEnv())
  const base = Math.floor(Date.now() / 1000) - 10 * 86_400
  // units one every 6 s: revision 2 takes effect at the 100th unit's first test
  const splitAt = base + 100 * 6
  const part = await freshPart(base, splitAt)
  const [lotId] = await db('lots').insert({ product_id: part.productId, code: `BDL-${tag}`, planned_qty: 1000 })
  // stations of its own, so no other test's station figures see these runs
  const stations: { id: number; name: string }[] = []
  for (const k of [1, 2, 3]) {
    const name = `BDL-${tag}-${k}`
    stations.push({ id: (await db('stations').insert({ name, location: 'bench rack' }))[0]!, name })
  }
  lot = {
    id: lotId!, code: `BDL-${tag}`, productId: part.productId, steps: tripler.steps, prefix: `BDL${tag}-`, base, splitAt,
    revisions: { first: part.first, second: part.second }, stations,
  }
  await growLot(db, lot, 0, WANT, () => {})
}, 120_000)

afterAll(async () => { await db?.destroy() })

describe('the dashboard bench loader', () => {
  it('loads about the measurements asked for, over every step of the part', async () => {
    const [[{ n }]] = await db.raw('SELECT COUNT(*) AS n FROM measurements WHERE lot_id = ?', [lot.id])
    expect(Number(n)).toBeGreaterThanOrEqual(WANT)
    expect(Number(n)).toBeLessThan(WANT + 2 * measurementsPerUnit(lot.steps))
    const steps = await db('test_runs').where({ lot_id: lot.id }).distinct('step').pluck('step')
    expect(steps.sort()).toEqual([...tripler.steps].sort())
  })

  it('judges each value by the revision in force at its run, as the decision rule does', async () => {
    const rows = await db('measurements as m').join('test_runs as r', 'r.id', 'm.run_id').where('m.lot_id', lot.id)
      .leftJoin('spec_limits as l', (j) => j.on('l.revision_id', 'm.revision_id').andOn('l.step', 'm.step').andOn('l.name', 'm.name').andOn('l.qualifier', 'm.qualifier'))
      .select('m.*', 'r.started_at as run_started', 'r.revision_id as run_revision', 'r.station_id as run_station', 'r.attempt',
        'l.lsl as spec_lsl', 'l.usl as spec_usl', 'l.rule as spec_rule', 'l.default_uncertainty as spec_u')
    const revisions = new Set<number>()
    for (const m of rows) {
      const at = new Date(m.run_started).getTime() / 1000
      expect(m.revision_id).toBe(at >= lot.splitAt ? lot.revisions.second : lot.revisions.first)
      expect([m.run_revision, m.run_station, !!m.first_attempt]).toEqual([m.revision_id, m.station_id, m.attempt === 1])
      revisions.add(m.revision_id)
      if (m.spec_lsl === null && m.spec_usl === null) {
        expect([m.verdict, m.zone, m.lsl, m.usl]).toEqual(['info', null, null, null])
        continue
      }
      const j = judge(m.value, { lsl: m.spec_lsl, usl: m.spec_usl, rule: m.spec_rule, defaultUncertainty: m.spec_u }, m.uncertainty)
      expect([m.verdict, m.zone, m.guard_band, m.lsl, m.usl], `${m.step} ${m.name} ${m.qualifier} = ${m.value}`).toEqual([j.verdict, j.zone, j.guardBand, m.spec_lsl, m.spec_usl])
    }
    expect(revisions.size).toBe(2)
  })

  it('fails a run exactly when one of its measurements fails', async () => {
    const [rows] = await db.raw(
      `SELECT r.server_verdict, MAX(m.verdict = 'fail') AS any_fail FROM test_runs r JOIN measurements m ON m.run_id = r.id WHERE r.lot_id = ? GROUP BY r.id`, [lot.id])
    for (const r of rows) expect(r.server_verdict).toBe(Number(r.any_fail) ? 'fail' : 'pass')
    expect(rows.some((r: any) => r.server_verdict === 'fail')).toBe(true)
  })

  it('keeps each unit step row as its runs say, with retests that pass after a failing first attempt', async () => {
    const runs = await db('test_runs').where({ lot_id: lot.id }).orderBy('attempt').select('id', 'unit_id', 'step', 'attempt', 'server_verdict', 'started_at')
    const steps = await db('unit_steps as s').join('units as u', 'u.id', 's.unit_id').where('u.lot_id', lot.id).select('s.*')
    const byKey = new Map<string, typeof runs>()
    for (const r of runs) byKey.set(`${r.unit_id}/${r.step}`, [...(byKey.get(`${r.unit_id}/${r.step}`) ?? []), r])
    expect(steps.length).toBe(byKey.size)
    let retests = 0
    for (const s of steps) {
      const list = byKey.get(`${s.unit_id}/${s.step}`)!
      expect(list.map((r) => r.attempt)).toEqual(list.map((_, i) => i + 1))
      for (let i = 1; i < list.length; i++) expect(new Date(list[i]!.started_at).getTime()).toBeGreaterThan(new Date(list[i - 1]!.started_at).getTime())
      const last = list[list.length - 1]!
      expect([s.attempts, s.first_verdict, s.latest_verdict, Number(s.latest_run_id)]).toEqual([list.length, list[0]!.server_verdict, last.server_verdict, Number(last.id)])
      if (list.length > 1) {
        retests++
        expect(list[0]!.server_verdict).toBe('fail')
      }
    }
    expect(retests).toBeGreaterThan(0)
  })
})

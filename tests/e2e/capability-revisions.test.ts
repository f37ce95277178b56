// A lot tested across a change of specification: every capability figure must be taken against the limits its
// values were judged by, one figure per revision, never one figure over two limit sets.
import jStat from 'jstat'
import { mean, quantileSorted as ssQuantileSorted, sampleStandardDeviation } from 'simple-statistics'
import { beforeAll, describe, expect, it } from 'vitest'
import { call, signIn } from '../support/http'
import { buildRevisionLot, OFFSETS, phaseNoiseOf, POWER_1, POWER_2, RETEST_2, REVISION_1, REVISION_2, type RevisionLot } from '../support/revision-lot'

let cookie = ''
let made: RevisionLot
const get = (path: string) => call('GET', path, { cookie })

beforeAll(async () => {
  cookie = await signIn('engineer@tercet.test')
  made = await buildRevisionLot(`${Date.now().toString(36)}${process.pid.toString(36)}`.toUpperCase())
}, 120_000)

/**
 * An independent computation of the indices from the posted values in test order: mean and sample sd from
 * simple-statistics, σ within = MR̄/d2 with d2 = 2/√π for moving ranges of two (1.128 in printed tables).
 */
function expected(values: number[], lim: { lsl: number; usl: number }) {
  const m = mean(values)
  const s = sampleStandardDeviation(values)
  let mr = 0
  for (let i = 1; i < values.length; i++) mr += Math.abs(values[i]! - values[i - 1]!)
  const within = mr / (values.length - 1) / (2 / Math.sqrt(Math.PI))
  const out = values.filter((v) => v < lim.lsl || v > lim.usl).length
  return {
    mean: m, s, within, out,
    cp: (lim.usl - lim.lsl) / (6 * within), cpk: Math.min(lim.usl - m, m - lim.lsl) / (3 * within),
    pp: (lim.usl - lim.lsl) / (6 * s), ppk: Math.min(lim.usl - m, m - lim.lsl) / (3 * s),
  }
}

const powerRows = (body: any) => body.capability.filter((c: any) => c.name === 'output_power' && c.step === 'final')

describe('lot summary of a lot judged under two revisions', () => {
  it('gives one capability row per revision, each with its own limits and a Cpk equal to an independent computation', async () => {
    const r = await get(`/api/lots/${made.lot}/summary`)
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(r.body.revisions.map((x: any) => x.revision)).toEqual([1, 2])
    const rows = powerRows(r.body)
    expect(rows.map((x: any) => x.revision)).toEqual([1, 2])
    for (const [row, values, rev] of [[rows[0], POWER_1, REVISION_1], [rows[1], POWER_2, REVISION_2]] as const) {
      expect(row).toMatchObject({ lsl: rev.power.lsl, usl: rev.power.usl, target: rev.power.target, n: values.length, revisionsOfParameter: 2 })
      const e = expected([...values], rev.power)
      expect(row.mean).toBeCloseTo(e.mean, 10)
      expect(row.sigmaOverall).toBeCloseTo(e.s, 10)
      expect(row.sigmaWithin).toBeCloseTo(e.within, 10)
      expect(row.cpk).toBeCloseTo(e.cpk, 9)
      expect(row.cp).toBeCloseTo(e.cp, 9)
      expect(row.ppk).toBeCloseTo(e.ppk, 9)
      expect(row.pp).toBeCloseTo(e.pp, 9)
      expect(row.outOfSpec).toBe(e.out)
    }
  })

  it('never shows a clean sample beside a negative Cpk: out-of-spec counts and Cpk agree in sign', async () => {
    const r = await get(`/api/lots/${made.lot}/summary`)
    const [first, second] = powerRows(r.body)
    // revision 1: every value inside 8–12, Cpk well above zero
    expect(first.outOfSpec).toBe(0)
    expect(first.cpk).toBeGreaterThan(1)
    // revision 2: the mean sits below the new LSL of 10.5, so Cpk is negative and values are counted out
    expect(second.cpk).toBeLessThan(0)
    expect(second.outOfSpec).toBeGreaterThan(0)
    for (const row of r.body.capability) {
      if (row.cpk !== null && row.cpk < 0) expect(row.outOfSpec).toBeGreaterThan(0)
      if (row.outOfSpec === 0 && row.cpk !== null) expect(row.cpk).toBeGreaterThan(0)
    }
    // and the yield says so: the runs judged by revision 2 below its LSL failed
    const final = r.body.steps.find((s: any) => s.step === 'final')
    expect(final.firstPass).toBe(POWER_1.length + POWER_2.filter((v) => v >= REVISION_2.power.lsl).length)
    expect(final.firstPassYield.p).toBeLessThan(1)
  })

  it('gives every index its interval: Pp by chi-square (jstat quantiles), Ppk and Cpk by Bissell, Cp by chi-square on σ within', async () => {
    const r = await get(`/api/lots/${made.lot}/summary`)
    const row = powerRows(r.body)[0]
    const n = POWER_1.length
    const z = jStat.normal.inv(0.975, 0, 1)
    const bissell = (c: number) => [c - z * Math.sqrt(1 / (9 * n) + c * c / (2 * (n - 1))), c + z * Math.sqrt(1 / (9 * n) + c * c / (2 * (n - 1)))]
    const chi = (c: number) => [c * Math.sqrt(jStat.chisquare.inv(0.025, n - 1) / (n - 1)), c * Math.sqrt(jStat.chisquare.inv(0.975, n - 1) / (n - 1))]
    for (const [k, ref] of [['pp', chi(row.pp)], ['ppk', bissell(row.ppk)], ['cpk', bissell(row.cpk)], ['cp', chi(row.cp)]] as const) {
      expect(row.intervals[k][0]).toBeCloseTo(ref[0]!, 8)
      expect(row.intervals[k][1]).toBeCloseTo(ref[1]!, 8)
    }
  })

  it('keeps the revisions apart in the all-attempts population too, the retest counted under revision 2', async () => {
    const r = await get(`/api/lots/${made.lot}/summary?attempts=all`)
    expect(r.status).toBe(200)
    const [first, second] = powerRows(r.body)
    expect(first).toMatchObject({ revision: 1, n: POWER_1.length, lsl: REVISION_1.power.lsl })
    expect(second).toMatchObject({ revision: 2, n: POWER_2.length + 1, lsl: REVISION_2.power.lsl })
    const e = expected([...POWER_2, RETEST_2], REVISION_2.power)
    expect(second.cpk).toBeCloseTo(e.cpk, 9)
    expect(second.ppk).toBeCloseTo(e.ppk, 9)
    expect(second.outOfSpec).toBe(e.out)
  })
})

describe('parameter view of a lot judged under two revisions', () => {
  it('opens on the latest revision with its limits and lists both revisions', async () => {
    const r = await get(`/api/lots/${made.lot}/parameters/output_power?step=final`)
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    expect(r.body.revisions.map((x: any) => [x.revision, x.n])).toEqual([[1, POWER_1.length], [2, POWER_2.length]])
    expect(r.body.parameter).toMatchObject({ revision: 2, lsl: REVISION_2.power.lsl, usl: REVISION_2.power.usl })
    expect(r.body.n).toBe(POWER_2.length)
    expect(r.body.normal.mean).toBeCloseTo(mean(POWER_2), 10)
    expect(r.body.histogram.counts.reduce((a: number, b: number) => a + b, 0)).toBe(POWER_2.length)
    expect(r.body.control.points.map((p: any) => p.value)).toEqual(POWER_2)
  })

  it('shows an earlier revision when asked, against that revision\'s limits', async () => {
    const r = await get(`/api/lots/${made.lot}/parameters/output_power?step=final&revision=1`)
    expect(r.status).toBe(200)
    expect(r.body.parameter).toMatchObject({ revision: 1, lsl: REVISION_1.power.lsl, usl: REVISION_1.power.usl, target: REVISION_1.power.target })
    expect(r.body.n).toBe(POWER_1.length)
    expect(r.body.normal.sigma).toBeCloseTo(sampleStandardDeviation(POWER_1), 10)
    expect(r.body.control.points.map((p: any) => p.value)).toEqual(POWER_1)
    // the histogram spans the values and that revision's limits: its first bar holds the LSL, its last the USL
    // (edges lie on the grid of the kept bins, so they bracket the limits rather than sit on them)
    const edges: number[] = r.body.histogram.edges
    expect(edges[0]).toBeLessThanOrEqual(Math.min(REVISION_1.power.lsl, ...POWER_1))
    expect(edges[1]).toBeGreaterThan(REVISION_1.power.lsl)
    expect(edges.at(-2)).toBeLessThanOrEqual(REVISION_1.power.usl)
    expect(edges.at(-1)).toBeGreaterThan(Math.max(REVISION_1.power.usl, ...POWER_1))
  })

  it('answers 400 with a pointer for a revision the part does not have', async () => {
    const r = await get(`/api/lots/${made.lot}/parameters/output_power?step=final&revision=7`)
    expect(r.status).toBe(400)
    expect(r.headers.get('content-type')).toContain('application/problem+json')
    expect(r.body.errors[0].pointer).toBe('/revision')
    const bad = await get(`/api/lots/${made.lot}/parameters/output_power?step=final&revision=two`)
    expect(bad.status).toBe(400)
    expect(bad.body.errors[0].pointer).toBe('/revision')
  })
})

describe('phase noise of a lot judged under two revisions', () => {
  it('gives percentiles of the latest revision\'s first attempts against its own mask, and the other revision when asked', async () => {
    for (const [query, rev, values] of [['', 2, POWER_2], ['&revision=1', 1, POWER_1]] as const) {
      const r = await get(`/api/lots/${made.lot}/phase-noise?step=final${query}`)
      expect(r.status, JSON.stringify(r.body)).toBe(200)
      expect(r.body.revision).toBe(rev)
      expect(r.body.revisions.map((x: any) => [x.revision, x.n])).toEqual([[1, POWER_1.length], [2, POWER_2.length]])
      const mask = rev === 1 ? REVISION_1.mask : REVISION_2.mask
      expect(r.body.offsets.map((o: any) => o.offsetHz)).toEqual([...OFFSETS])
      OFFSETS.forEach((f, k) => {
        const sorted = values.map((_, i) => phaseNoiseOf(rev, i)[k]!).sort((a, b) => a - b)
        const o = r.body.offsets[k]
        expect(o.usl).toBe(mask[f])
        expect(o.n).toBe(values.length)
        // simple-statistics quantileSorted is not the type-7 rule at every p, so the median is the check here
        // read from the kept bins: within one bin width (`resolution`, a small part of the spread) of the sample's
        expect(o.resolution).toBeLessThanOrEqual(Math.max((sorted[sorted.length - 1]! - sorted[0]!) / 128, 1e-12))
        expect(Math.abs(o.median - ssQuantileSorted(sorted, 0.5))).toBeLessThanOrEqual(o.resolution)
        expect(o.min).toBe(sorted[0])
        expect(o.max).toBe(sorted[sorted.length - 1])
      })
    }
  })
})

describe('trends of a part whose lot spans two revisions', () => {
  it('gives the lot one capability entry per revision, each against its own limits', async () => {
    const r = await get(`/api/trends?part=${made.part}&name=output_power&step=final`)
    expect(r.status, JSON.stringify(r.body)).toBe(200)
    const lot = r.body.lots.find((l: any) => l.code === made.lot)
    // location and spread pool every value of the lot: they depend on no limit
    expect(lot.n).toBe(POWER_1.length + POWER_2.length)
    expect(lot.mean).toBeCloseTo(mean([...POWER_1, ...POWER_2]), 10)
    expect(lot.capability.map((c: any) => [c.revision, c.lsl, c.usl, c.n])).toEqual([
      [1, REVISION_1.power.lsl, REVISION_1.power.usl, POWER_1.length], [2, REVISION_2.power.lsl, REVISION_2.power.usl, POWER_2.length],
    ])
    for (const [c, values, rev] of [[lot.capability[0], POWER_1, REVISION_1], [lot.capability[1], POWER_2, REVISION_2]] as const) {
      const e = expected([...values], rev.power)
      expect(c.cpk).toBeCloseTo(e.cpk, 9)
      expect(c.ppk).toBeCloseTo(e.ppk, 9)
      expect(c.outOfSpec).toBe(e.out)
    }
  })
})

import { mean as ssMean, sampleStandardDeviation, sampleVariance } from 'simple-statistics'
import jStat from 'jstat'
import { describe, expect, it } from 'vitest'
import { poolBy, poolRows, rowMoments, summarise, type StatRow } from '../../../server/services/analytics/station-rows'
import { compareStations } from '../../../server/services/analytics/station-compare'
import { mulberry32, normalSample } from '../helpers/prng'

/** A lot_param_stats row as ingest leaves it: sums about the first value, moving ranges in test order. */
function rowOf(values: number[], outOfSpec = 0, failAll = 0): StatRow {
  const shift = values[0]!
  let sumD = 0
  let sumSqD = 0
  let mrSum = 0
  values.forEach((x, i) => {
    sumD += x - shift
    sumSqD += (x - shift) ** 2
    if (i > 0) mrSum += Math.abs(x - values[i - 1]!)
  })
  return { n: values.length, shift, sumD, sumSqD, min: Math.min(...values), max: Math.max(...values), mrSum, mrN: values.length - 1, outOfSpec, failAll }
}

describe('pooling lot × station rows', () => {
  it('gives the mean and sample σ of the union of the stations’ values', () => {
    const rand = mulberry32(77)
    const a = normalSample(rand, 40, 7.0, 0.3)
    const b = normalSample(rand, 25, 7.4, 0.5)
    const c = normalSample(rand, 3, 6.5, 0.2)
    const s = summarise(poolRows([rowOf(a), rowOf(b), rowOf(c)]))
    const all = [...a, ...b, ...c]
    expect(s.n).toBe(all.length)
    expect(s.mean).toBeCloseTo(ssMean(all), 12)
    expect(s.sigmaOverall).toBeCloseTo(sampleStandardDeviation(all), 12)
    expect(s.min).toBe(Math.min(...all))
    expect(s.max).toBe(Math.max(...all))
  })

  it('keeps moving ranges inside each station: σ_within = (ΣMR_a + ΣMR_b)/(n_a − 1 + n_b − 1)/d2', () => {
    const a = [1, 2, 1, 2]
    const b = [10, 10.5]
    const s = summarise(poolRows([rowOf(a), rowOf(b)]))
    // three ranges of 1 on a and one of 0.5 on b; the jump from a to b is not a range
    expect(s.sigmaWithin).toBeCloseTo(3.5 / 4 / (2 / Math.sqrt(Math.PI)), 14)
  })

  it('stays exact for values far from zero with a small spread (sums are about each row’s own shift)', () => {
    const a = [375_000_150.1, 375_000_150.3, 375_000_149.9]
    const b = [375_000_151.2, 375_000_150.8]
    const s = summarise(poolRows([rowOf(a), rowOf(b)]))
    expect(s.sigmaOverall).toBeCloseTo(sampleStandardDeviation([...a, ...b]), 6)
    expect(rowMoments(rowOf(a)).mean).toBeCloseTo(ssMean(a), 6)
  })

  it('treats an empty row (retests only) as contributing counts but no values', () => {
    const empty: StatRow = { n: 0, shift: 3, sumD: 0, sumSqD: 0, min: 3, max: 3, mrSum: 0, mrN: 0, outOfSpec: 0, failAll: 2 }
    const p = poolRows([rowOf([1, 2, 3], 1, 1), empty])
    expect(p.moments.n).toBe(3)
    expect(p.moments.min).toBe(1)
    expect(p.failAll).toBe(3)
    expect(p.outOfSpec).toBe(1)
    expect(summarise(poolRows([empty]))).toMatchObject({ n: 0, mean: null, sigmaOverall: null, sigmaWithin: null })
  })

  it('groups by key in first-seen order', () => {
    const rows = [{ ...rowOf([1, 2]), k: 'x' }, { ...rowOf([5, 6, 7]), k: 'y' }, { ...rowOf([3]), k: 'x' }]
    const g = poolBy(rows, (r) => r.k)
    expect([...g.keys()]).toEqual(['x', 'y'])
    expect(summarise(g.get('x')!).mean).toBeCloseTo(2, 14)
    expect(g.get('y')!.moments.n).toBe(3)
  })
})

describe('compareStations', () => {
  const a = [6.91, 7.12, 6.85, 7.04, 6.97, 7.2, 6.88]
  const b = [7.41, 7.33, 7.52, 7.38, 7.46]
  const c = [7.0, 7.1, 6.95, 7.05]
  const input = [{ station: 'A', stats: poolRows([rowOf(a)]) }, { station: 'B', stats: poolRows([rowOf(b)]) }, { station: 'C', stats: poolRows([rowOf(c)]) }]

  it('measures bias against the pooled mean and tests each station against the others pooled (Welch)', () => {
    const { pooled, stations } = compareStations(input)
    const all = [...a, ...b, ...c]
    expect(pooled.mean).toBeCloseTo(ssMean(all), 12)
    const sB = stations.find((s) => s.station === 'B')!
    expect(sB.bias).toBeCloseTo(ssMean(b) - ssMean(all), 12)
    const rest = [...a, ...c]
    const va = sampleVariance(b) / b.length
    const vr = sampleVariance(rest) / rest.length
    const t = (ssMean(b) - ssMean(rest)) / Math.sqrt(va + vr)
    const df = (va + vr) ** 2 / (va ** 2 / (b.length - 1) + vr ** 2 / (rest.length - 1))
    expect(sB.welch!.t).toBeCloseTo(t, 10)
    expect(sB.welch!.p).toBeCloseTo(2 * (1 - jStat.studentt.cdf(Math.abs(t), df)), 9)
  })

  it('flags exactly the station with the largest |bias|', () => {
    const { stations } = compareStations(input)
    expect(stations.filter((s) => s.largestBias).map((s) => s.station)).toEqual(['B'])
  })

  it('does not flag a station with too few values for a test, however far its mean', () => {
    const lone = { station: 'Z', stats: poolRows([rowOf([40])]) }
    const { stations } = compareStations([...input, lone])
    expect(stations.find((s) => s.station === 'Z')!.welch).toBeNull()
    expect(stations.filter((s) => s.largestBias).map((s) => s.station)).not.toContain('Z')
    expect(stations.filter((s) => s.largestBias)).toHaveLength(1)
  })

  it('flags nobody when two stations of equal size are equally far from the pooled mean', () => {
    const { stations } = compareStations([{ station: 'A', stats: poolRows([rowOf([1, 2, 3])]) }, { station: 'B', stats: poolRows([rowOf([2, 3, 4])]) }])
    expect(stations[0]!.bias).toBeCloseTo(-0.5, 14)
    expect(stations[1]!.bias).toBeCloseTo(0.5, 14)
    expect(stations.some((s) => s.largestBias)).toBe(false)
  })

  it('flags nobody with a single station, and has no test without others', () => {
    const { stations } = compareStations([input[0]!])
    expect(stations[0]!.largestBias).toBe(false)
    expect(stations[0]!.welch).toBeNull()
    expect(stations[0]!.bias).toBeCloseTo(0, 14)
  })
})

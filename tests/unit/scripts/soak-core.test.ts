import { describe, expect, it } from 'vitest'
import { FLAT_P99_RATIO, FLAT_RSS_MB, SoakUsageError, failures, flatness, parseSoakArgs, percentile, reconcile, slope, type MinuteSample } from '../../../scripts/lib/soak-core'

const minuteOf = (minute: number, rssMb: number, p99Ms: number): MinuteSample => ({ minute, rssMb, p50Ms: p99Ms / 4, p99Ms, runs: 1000, errors5xx: 0, status503: 0 })

describe('parseSoakArgs', () => {
  it('defaults to a 10-minute soak at 80 % and reads both spellings', () => {
    expect(parseSoakArgs([])).toEqual({ minutes: 10, ci: false, noBuild: false, calibrateSeconds: 25, load: 0.8, maxGrowthMb: 200 })
    expect(parseSoakArgs(['--minutes', '2.5', '--ci', '--no-build', '--calibrate-seconds=15', '--load', '0.5', '--max-growth-mb=300']))
      .toEqual({ minutes: 2.5, ci: true, noBuild: true, calibrateSeconds: 15, load: 0.5, maxGrowthMb: 300 })
    expect(parseSoakArgs(['--ci']).calibrateSeconds).toBe(20)
    expect(parseSoakArgs(['--ci', '--calibrate-seconds', '30']).calibrateSeconds).toBe(30)
  })

  it('refuses unknown, repeated, missing and out-of-range values', () => {
    expect(() => parseSoakArgs(['--hours', '1'])).toThrow('unknown option --hours')
    expect(() => parseSoakArgs(['--minutes', '1', '--minutes', '2'])).toThrow('given twice')
    expect(() => parseSoakArgs(['--minutes'])).toThrow('needs a value')
    expect(() => parseSoakArgs(['--minutes', '--ci'])).toThrow('needs a value')
    expect(() => parseSoakArgs(['--minutes', 'ten'])).toThrow('must be a number')
    expect(() => parseSoakArgs(['--minutes', '0.1'])).toThrow('between 0.5 and 1440')
    expect(() => parseSoakArgs(['--ci=yes'])).toThrow('takes no value')
    expect(() => parseSoakArgs(['10'])).toThrow(SoakUsageError)
  })
})

describe('percentile', () => {
  // the nearest-rank method's worked example (five values 15, 20, 35, 40, 50): 30th → 20, 40th → 20, 50th → 35, 100th → 50
  it('follows the nearest-rank definition', () => {
    const xs = [15, 20, 35, 40, 50]
    expect(percentile(xs, 0.3)).toBe(20)
    expect(percentile(xs, 0.4)).toBe(20)
    expect(percentile(xs, 0.5)).toBe(35)
    expect(percentile(xs, 1)).toBe(50)
    expect(percentile(xs, 0)).toBe(15)
    expect(percentile([], 0.5)).toBeNaN()
  })
})

describe('slope', () => {
  // Anscombe's first data set (Anscombe 1973): least-squares line y = 3.00 + 0.500 x
  it('is the least-squares slope', () => {
    const x = [10, 8, 13, 9, 11, 14, 6, 4, 12, 7, 5]
    const y = [8.04, 6.95, 7.58, 8.81, 8.33, 9.96, 7.24, 4.26, 10.84, 4.82, 5.68]
    expect(slope(x.map((v, i) => [v, y[i]!]))).toBeCloseTo(0.5, 3)
  })

  it('needs two distinct minutes', () => {
    expect(slope([[2, 100]])).toBeNull()
    expect(slope([[2, 100], [2, 120]])).toBeNull()
    expect(slope([[2, 100], [3, Number.NaN]])).toBeNull()
  })
})

describe('flatness', () => {
  it('leaves minute 1 out, compares the first and last thirds, and takes slopes after minute 1', () => {
    // minute 1 is a warm-up jump that must not count; then 2 MB a minute and a steady p99
    const samples = [minuteOf(1, 100, 900), ...[2, 3, 4, 5, 6, 7, 8, 9, 10].map((m) => minuteOf(m, 200 + 2 * (m - 2), 40))]
    const f = flatness(samples)
    expect(f.rssSlopeMbPerMin).toBe(2)
    expect(f.p99SlopeMsPerMin).toBe(0)
    // early = minutes 2–4 (mean 202), late = minutes 8–10 (mean 214)
    expect(f.earlyRssMb).toBe(202)
    expect(f.lateRssMb).toBe(214)
    expect(f.rssGrowthMb).toBe(12)
    expect(f.flat).toBe(true)
  })

  it('is not flat when memory grows past the bound or the late p99 passes the ratio', () => {
    const growing = [1, 2, 3, 4, 5, 6, 7].map((m) => minuteOf(m, 200 + 20 * m, 40))
    expect(flatness(growing).rssGrowthMb).toBeGreaterThan(FLAT_RSS_MB)
    expect(flatness(growing).flat).toBe(false)
    const slower = [1, 2, 3, 4, 5, 6, 7].map((m) => minuteOf(m, 200, m <= 4 ? 40 : 40 * FLAT_P99_RATIO + 1))
    expect(flatness(slower).flat).toBe(false)
    const justSo = [1, 2, 3, 4, 5, 6, 7].map((m) => minuteOf(m, 200, m <= 4 ? 40 : 40 * FLAT_P99_RATIO))
    expect(flatness(justSo).flat).toBe(true)
  })

  it('keeps minute 1 when the soak is too short to spare it', () => {
    const f = flatness([minuteOf(1, 200, 40), minuteOf(2, 210, 44), minuteOf(2.5, 215, 46)])
    expect(f.earlyRssMb).toBe(200)
    expect(f.lateRssMb).toBe(215)
    expect(f.rssSlopeMbPerMin).toBe(10)
  })
})

describe('reconcile', () => {
  const ledger = { sent: new Set(['a', 'b', 'c', 'd']), acknowledged: new Set(['a', 'b', 'c']) }

  it('finds nothing wrong when every acknowledged run is stored once', () => {
    // d was sent but never acknowledged: stored or not, it is not lost
    expect(reconcile(ledger, [{ uuid: 'a', copies: 1 }, { uuid: 'b', copies: 1 }, { uuid: 'c', copies: 1 }], 0))
      .toEqual({ inDatabase: 3, lost: 0, duplicated: 0, unknownInDatabase: 0, lostIds: [] })
  })

  it('counts lost, duplicated and unknown runs', () => {
    const r = reconcile(ledger, [{ uuid: 'a', copies: 2 }, { uuid: 'd', copies: 1 }, { uuid: 'z', copies: 1 }], 1)
    expect(r).toEqual({ inDatabase: 3, lost: 2, duplicated: 2, unknownInDatabase: 1, lostIds: ['b', 'c'] })
  })
})

describe('failures', () => {
  const clean = { lost: 0, duplicated: 0, unknownInDatabase: 0, runsWithoutMeasurements: 0, errors5xx: 0, refused: 0, serverDied: false, rssRiseMb: 120, maxGrowthMb: 200 }

  it('passes a clean soak whatever its speed', () => {
    expect(failures(clean)).toEqual([])
  })

  it('names every correctness failure', () => {
    expect(failures({ ...clean, lost: 1 })).toEqual(['1 acknowledged runs are not in the database'])
    expect(failures({ ...clean, duplicated: 2 })[0]).toMatch('stored more than once')
    expect(failures({ ...clean, errors5xx: 3 })[0]).toMatch('5xx other than 503')
    expect(failures({ ...clean, serverDied: true })[0]).toMatch('server exited')
    expect(failures({ ...clean, rssRiseMb: 201 })[0]).toMatch('RSS rose 201 MB')
    expect(failures({ ...clean, refused: 1, runsWithoutMeasurements: 1, unknownInDatabase: 1 })).toHaveLength(3)
  })
})

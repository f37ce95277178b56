import jStat from 'jstat'
import { describe, expect, it } from 'vitest'
import { paretoFailures, rolledThroughputYield, wilsonInterval } from '../../../shared/utils/yield'
import { mulberry32 } from '../helpers/prng'

const half = (decimals: number) => 0.5 * 10 ** -decimals

describe('wilsonInterval', () => {
  it('Statulator "CI for a single proportion": 12/150 → 0.046 – 0.135', () => {
    const r = wilsonInterval(12, 150)!
    expect(r.p).toBeCloseTo(0.08, 14)
    expect(Math.abs(r.lo - 0.046)).toBeLessThan(half(3))
    expect(Math.abs(r.hi - 0.135)).toBeLessThan(half(3))
  })

  it('Newcombe (1998a) Table II Wilson score intervals', () => {
    // Newcombe (1998a), Statistics in Medicine 17, 857–872, Wilson column: values from memory, each matched by an
    // independent recomputation.
    const cases: [number, number, number, number][] = [
      [81, 263, 0.2553, 0.3662],
      [15, 148, 0.0624, 0.1605],
      [0, 20, 0, 0.1611],
      [1, 29, 0.0061, 0.1718],
    ]
    for (const [x, n, lo, hi] of cases) {
      const r = wilsonInterval(x, n)!
      expect(Math.abs(r.lo - lo)).toBeLessThan(half(4))
      expect(Math.abs(r.hi - hi)).toBeLessThan(half(4))
    }
  })

  it('matches the score-test definition: the bounds are where |p̂ − p|/√(p(1−p)/n) = z', () => {
    const rand = mulberry32(2718)
    for (let i = 0; i < 300; i++) {
      const n = 1 + Math.floor(rand() * 500)
      const x = Math.floor(rand() * (n + 1))
      const conf = 0.8 + rand() * 0.19
      const z = jStat.normal.inv(1 - (1 - conf) / 2, 0, 1)
      const r = wilsonInterval(x, n, conf)!
      const score = (p: number) => Math.abs(x / n - p) / Math.sqrt((p * (1 - p)) / n)
      if (x > 0) expect(score(r.lo)).toBeCloseTo(z, 6)
      else expect(r.lo).toBe(0)
      if (x < n) expect(score(r.hi)).toBeCloseTo(z, 6)
      else expect(r.hi).toBe(1)
      expect(r.lo).toBeLessThanOrEqual(r.p)
      expect(r.hi).toBeGreaterThanOrEqual(r.p)
    }
  })

  it('pins the bounds at 0 and 1 and rejects impossible counts', () => {
    const all = wilsonInterval(20, 20)!
    expect(all.hi).toBe(1)
    expect(all.lo).toBeCloseTo(1 - 0.1611, 4)
    expect(wilsonInterval(0, 0)).toBeNull()
    expect(() => wilsonInterval(5, 4)).toThrow(RangeError)
    expect(() => wilsonInterval(-1, 4)).toThrow(RangeError)
    expect(() => wilsonInterval(1, 4, 1)).toThrow(RangeError)
  })
})

describe('rolledThroughputYield', () => {
  it('is the product of step yields (common practice definition)', () => {
    expect(rolledThroughputYield([0.9, 0.95, 0.98])).toBeCloseTo(0.8379, 12)
    expect(rolledThroughputYield([0.97])).toBe(0.97)
    expect(rolledThroughputYield([1, 0, 0.5])).toBe(0)
    expect(rolledThroughputYield([])).toBe(1)
    expect(() => rolledThroughputYield([1.2])).toThrow(RangeError)
    expect(() => rolledThroughputYield([NaN])).toThrow(RangeError)
  })
})

describe('paretoFailures', () => {
  it('sorts by count, breaks ties by key, merges keys and ends at 100 %', () => {
    const rows = paretoFailures([
      { key: 'phase_noise_10k', count: 7 },
      { key: 'harmonic_3', count: 12 },
      { key: 'output_power', count: 7 },
      { key: 'freq_error', count: 3 },
      { key: 'harmonic_3', count: 1 },
    ])
    expect(rows.map((r) => r.key)).toEqual(['harmonic_3', 'output_power', 'phase_noise_10k', 'freq_error'])
    expect(rows.map((r) => r.count)).toEqual([13, 7, 7, 3])
    expect(rows[0]!.percent).toBeCloseTo(43.3333333333, 8)
    expect(rows.map((r) => r.cumulativePercent)).toEqual([(100 * 13) / 30, (100 * 20) / 30, (100 * 27) / 30, 100])
  })

  it('handles empty input and all-zero counts', () => {
    expect(paretoFailures([])).toEqual([])
    const zeros = paretoFailures([{ key: 'b', count: 0 }, { key: 'a', count: 0 }])
    expect(zeros.map((r) => r.key)).toEqual(['a', 'b'])
    expect(zeros.every((r) => r.percent === 0 && r.cumulativePercent === 0)).toBe(true)
    expect(() => paretoFailures([{ key: 'x', count: -1 }])).toThrow(RangeError)
  })
})

import { equalIntervalBreaks, quantile as ssQuantile, quantileSorted as ssQuantileSorted } from 'simple-statistics'
import { describe, expect, it } from 'vitest'
import { histogram, quantile, quantileSorted } from '../../../shared/utils/percentiles'
import { mulberry32, normalSample } from '../helpers/prng'

describe('quantileSorted (type 7)', () => {
  it('matches documented examples', () => {
    // simple-statistics documentation example for quantileSorted.
    expect(quantileSorted([3, 6, 7, 8, 8, 9, 10, 13, 15, 16, 20], 0.5)).toBe(9)
    // NumPy percentile documentation: np.percentile([[10, 7, 4], [3, 2, 1]], 50) = 3.5 (from memory).
    expect(quantile([10, 7, 4, 3, 2, 1], 0.5)).toBe(3.5)
    // R quantile(1:10, 0.25), default type 7, gives 3.25 (from memory; h = 9·0.25 = 2.25).
    expect(quantileSorted([1, 2, 3, 4, 5, 6, 7, 8, 9, 10], 0.25)).toBeCloseTo(3.25, 14)
  })

  it('equals simple-statistics quantileSorted and quantile on generated data', () => {
    const rand = mulberry32(55)
    for (const n of [1, 2, 3, 10, 101, 1000]) {
      const xs = normalSample(rand, n, 4, 2)
      const sorted = [...xs].sort((a, b) => a - b)
      for (const p of [0, 0.001, 0.01, 0.1, 0.25, 0.5, 0.75, 0.9, 0.99, 0.999, 1, rand()]) {
        expect(quantileSorted(sorted, p)).toBeCloseTo(ssQuantileSorted(sorted, p), 12)
        expect(quantile(xs, p)).toBeCloseTo(ssQuantile(xs, p), 12)
      }
    }
  })

  it('returns the extremes at 0 and 1 and rejects bad input', () => {
    expect(quantileSorted([1, 5, 9], 0)).toBe(1)
    expect(quantileSorted([1, 5, 9], 1)).toBe(9)
    expect(() => quantileSorted([], 0.5)).toThrow(RangeError)
    expect(() => quantileSorted([1], 1.1)).toThrow(RangeError)
    expect(() => quantileSorted([1], NaN)).toThrow(RangeError)
  })

  it('does not reorder its input', () => {
    const xs = [3, 1, 2]
    quantile(xs, 0.5)
    expect(xs).toEqual([3, 1, 2])
  })
})

describe('histogram', () => {
  it('uses the same equal-width edges as simple-statistics equalIntervalBreaks', () => {
    const rand = mulberry32(3)
    const xs = normalSample(rand, 1000, 0, 1)
    for (const bins of [1, 5, 12, 40]) {
      const h = histogram(xs, { bins })
      const ref = equalIntervalBreaks(xs, bins)
      expect(h.edges).toHaveLength(bins + 1)
      h.edges.forEach((e, i) => expect(e).toBeCloseTo(ref[i] as number, 12))
      expect(h.counts.reduce((s, c) => s + c, 0)).toBe(1000)
      expect(h.underflow + h.overflow).toBe(0)
      for (let k = 0; k < bins; k++) {
        const lo = h.edges[k] as number
        const hi = h.edges[k + 1] as number
        const expected = xs.filter((x) => x >= lo && (k === bins - 1 ? x <= hi : x < hi)).length
        expect(h.counts[k]).toBe(expected)
      }
    }
  })

  it('puts edge values in the upper bin, max in the last bin, and counts out-of-range values', () => {
    const h = histogram([0, 0.25, 0.5, 0.75, 1, 1, -0.1, 1.2, 0.3], { bins: 4, min: 0, max: 1 })
    expect(h.edges).toEqual([0, 0.25, 0.5, 0.75, 1])
    expect(h.counts).toEqual([1, 2, 1, 3])
    expect(h.underflow).toBe(1)
    expect(h.overflow).toBe(1)
    // 0.3/0.1 is 2.999… in binary; the value must still land in [0.3, 0.4).
    const tenths = histogram([0.3, 0.6, 0.7, 0.29999], { bins: 10, min: 0, max: 1 })
    expect(tenths.edges[3]).toBe(0.3)
    expect(tenths.counts).toEqual([0, 0, 1, 1, 0, 0, 1, 1, 0, 0])
  })

  it('handles constant data, empty input and bad options', () => {
    expect(histogram([2, 2, 2], { bins: 5 })).toEqual({ edges: [2, 2], counts: [3], underflow: 0, overflow: 0 })
    expect(histogram([], { bins: 3 })).toEqual({ edges: [], counts: [], underflow: 0, overflow: 0 })
    expect(histogram([], { bins: 2, min: 0, max: 1 }).counts).toEqual([0, 0])
    expect(() => histogram([1], { bins: 0 })).toThrow(RangeError)
    expect(() => histogram([1], { bins: 2, min: 3, max: 1 })).toThrow(RangeError)
    expect(() => histogram([NaN], { bins: 2 })).toThrow(RangeError)
  })
})

import { describe, expect, it } from 'vitest'
import * as ss from 'simple-statistics'
import { addValue, emptyParamRow, inTimeOrder, type StoredValue } from '../../../server/services/ingest/param-stats-merge'
import { momentsFromShiftedSums, stdDev } from '../../../shared/utils/moments'

const key = { lotId: 1, step: 'final', name: 'output_power', qualifier: 0, stationId: 7 }
const at = (i: number) => Date.UTC(2026, 10, 1) + i * 60_000
const value = (v: number, i: number, extra: Partial<StoredValue> = {}): StoredValue =>
  ({ value: v, unit: 'dBm', firstAttempt: true, startedAt: at(i), id: i + 1, lsl: 5.5, usl: 8.5, failed: false, ...extra })

describe('parameter row arithmetic', () => {
  // a large offset (an output frequency near 375 MHz) is where plain sums of squares lose precision
  const xs = Array.from({ length: 200 }, (_, i) => 375e6 + 150 + 40 * Math.sin(i * 1.7) + (i % 7))

  it('mean and standard deviation agree with simple-statistics, about a large offset', () => {
    const row = emptyParamRow(key, value(xs[0]!, 0))
    xs.forEach((x, i) => addValue(row, value(x, i, { lsl: null, usl: null })))
    const m = momentsFromShiftedSums(row.n, row.shift, row.sumD, row.sumSqD, row.min, row.max)
    expect(row.n).toBe(xs.length)
    expect(m.mean).toBeCloseTo(ss.mean(xs), 6)
    expect(stdDev(m)).toBeCloseTo(ss.sampleStandardDeviation(xs), 6)
    expect(row.min).toBe(ss.min(xs))
    expect(row.max).toBe(ss.max(xs))
  })

  it('adds the moving range in time order, and flags a late arrival instead of adding it out of order', () => {
    const vals = [7.0, 7.4, 6.9, 7.2]
    const row = emptyParamRow(key, value(vals[0]!, 0))
    vals.forEach((v, i) => addValue(row, value(v, i)))
    // |7.4 − 7.0| + |6.9 − 7.4| + |7.2 − 6.9| = 0.4 + 0.5 + 0.3
    expect(row.mrSum).toBeCloseTo(1.2, 12)
    expect(row.mrN).toBe(3)
    expect(row.mrStale).toBe(false)
    addValue(row, value(7.1, -5))
    expect(row.mrStale).toBe(true)
    expect(row.n).toBe(5)
    expect(row.lastValue).toBe(7.2)
  })

  it('counts out-of-spec first attempts and failures of every attempt; retests stay out of the sample', () => {
    const row = emptyParamRow(key, value(9.0, 0, { firstAttempt: false, failed: true }))
    addValue(row, value(9.0, 0, { firstAttempt: false, failed: true }))
    expect(row).toMatchObject({ n: 0, failAll: 1, outOfSpec: 0, lastValue: null })
    addValue(row, value(5.0, 1, { failed: true }))
    addValue(row, value(7.0, 2))
    expect(row).toMatchObject({ n: 2, failAll: 2, outOfSpec: 1, min: 5.0, max: 7.0 })
  })

  it('orders by start time, then by storage order', () => {
    const list = [value(1, 2), value(2, 1), { ...value(3, 1), id: 0 }]
    expect(list.sort(inTimeOrder).map((v) => v.value)).toEqual([3, 2, 1])
  })
})

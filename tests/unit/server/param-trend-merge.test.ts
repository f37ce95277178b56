import { describe, expect, it } from 'vitest'
import * as ss from 'simple-statistics'
import { addTrendValue, centredTrendSums, emptyTrendRow, trendRowFromValues } from '../../../server/services/ingest/param-trend-merge'
import { slopeFromCentredSums } from '../../../shared/utils/regression'

const group = { lotId: 1, step: 'final', name: 'output_power', qualifier: 0, revisionId: 3 }
const at = (i: number) => Date.UTC(2026, 10, 1) + i * 60_000
// a drifting output about a large offset, as a frequency reading would be
const ys = Array.from({ length: 300 }, (_, i) => 375e6 + 0.02 * i + 3 * Math.sin(i * 1.3))

describe('drift sums in test order', () => {
  it('give the least-squares slope per 1 000 units of simple-statistics, with Σx² from n alone', () => {
    const row = emptyTrendRow(group, false, ys[0]!)
    ys.forEach((y, i) => addTrendValue(row, { value: y, startedAt: at(i), id: i + 1 }))
    expect(row.stale).toBe(false)
    const s = centredTrendSums(row)
    const xs = ys.map((_, i) => i / 1000)
    const ref = ss.linearRegression(xs.map((x, i) => [x, ys[i]!]))
    // Σ(i − ī)² over 0…n−1 is n(n² − 1)/12 (sum of squares of the first n integers about their mean)
    expect(s.sxx * 1e6).toBeCloseTo(ys.reduce((a, _, i) => a + (i - (ys.length - 1) / 2) ** 2, 0), 6)
    expect(slopeFromCentredSums(s)!.slope / ref.m).toBeCloseTo(1, 9)
  })

  it('a value before the last goes stale but keeps n and the plain sums exact; in test order it matches', () => {
    const row = emptyTrendRow(group, true, ys[0]!)
    const late = 17
    ys.forEach((y, i) => { if (i !== late) addTrendValue(row, { value: y, startedAt: at(i), id: i + 1 }) })
    expect(row.stale).toBe(false)
    addTrendValue(row, { value: ys[late]!, startedAt: at(late), id: 10_000 })
    expect(row.stale).toBe(true)
    const fresh = trendRowFromValues(group, true, ys.map((y, i) => ({ value: y, startedAt: at(i), id: i + 1 })))
    expect(row.n).toBe(fresh.n)
    // the sums are about different shifts: compare the mean they give
    expect(row.shift + row.sumD / row.n).toBeCloseTo(fresh.shift + fresh.sumD / fresh.n, 6)
    expect(slopeFromCentredSums(centredTrendSums(fresh))!.slope / ss.linearRegression(ys.map((y, i) => [i / 1000, y])).m).toBeCloseTo(1, 9)
  })

  it('orders equal start times by storage order', () => {
    const row = emptyTrendRow(group, true, 1)
    addTrendValue(row, { value: 1, startedAt: at(0), id: 5 })
    addTrendValue(row, { value: 2, startedAt: at(0), id: 6 })
    expect(row.stale).toBe(false)
    addTrendValue(row, { value: 3, startedAt: at(0), id: 4 })
    expect(row.stale).toBe(true)
  })
})

import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import * as ss from 'simple-statistics'
import { addTrendValue, afterLast, centredTrendSums, emptyTrendRow, insertTrendValue } from '../../../server/services/ingest/param-trend-merge'
import { trendTail, type TailValue } from '../../../server/services/ingest/param-trend-tail'
import { slopeFromCentredSums } from '../../../shared/utils/regression'

const group = { lotId: 1, step: 'final', name: 'output_power', qualifier: 0, revisionId: 3 }

/**
 * Folds `first` in test order, then `second` (sorted, as a fold sorts) with late values put in place from the tail
 * after the earliest late one, and returns the row and the values of the population in test order.
 */
function foldTwice(first: TailValue[], second: TailValue[], allAttempts: boolean) {
  const inPopulation = (vs: TailValue[]) => (allAttempts ? vs : vs.filter((v) => v.firstAttempt))
  const order = (a: TailValue, b: TailValue) => a.startedAt - b.startedAt || a.id - b.id
  const folded = inPopulation(first).sort(order)
  const row = emptyTrendRow(group, allAttempts, 7)
  for (const v of folded) addTrendValue(row, v)
  const batch = inPopulation(second).sort(order)
  const earliestLate = batch.find((v) => !afterLast(row, v))
  const tail = trendTail(earliestLate ? first.filter((v) => order(v, earliestLate) > 0).sort(order) : [])
  for (const v of batch) {
    if (afterLast(row, v)) addTrendValue(row, v)
    else insertTrendValue(row, v, tail.after(allAttempts, row.shift, v))
  }
  return { row, values: [...folded, ...batch].sort(order) }
}

const value = fc.record({ startedAt: fc.integer({ min: 0, max: 400 }), value: fc.double({ min: 6, max: 9, noNaN: true }), firstAttempt: fc.boolean() })

describe('late values put in place from the tail after them', () => {
  it('give the drift sums of the values in test order: the least-squares slope of simple-statistics', () => {
    fc.assert(fc.property(fc.array(value, { minLength: 2, maxLength: 60 }), fc.array(value, { minLength: 1, maxLength: 30 }), fc.boolean(), (a, b, all) => {
      let id = 0
      const first = a.map((v) => ({ ...v, id: ++id }))
      const second = b.map((v) => ({ ...v, id: ++id }))
      const { row, values } = foldTwice(first, second, all)
      expect(row.stale).toBe(false)
      expect(row.n).toBe(values.length)
      // Σ rank·d straight from the definition, ranks 0…n−1 in test order
      const sumRd = values.reduce((s, v, i) => s + i * (v.value - row.shift), 0)
      expect(Math.abs(row.sumRd - sumRd)).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(sumRd)) + 1e-6)
      if (values.length < 3 || new Set(values.map((v) => v.value)).size < 2) return
      const ref = ss.linearRegression(values.map((v, i) => [i / 1000, v.value]))
      const kept = slopeFromCentredSums(centredTrendSums(row))!
      expect(Math.abs(kept.slope - ref.m)).toBeLessThanOrEqual(1e-6 * Math.max(1, Math.abs(ref.m)))
    }))
  })

  it('counts only the tail values after the late one, in the population asked for', () => {
    const tail = trendTail([
      { startedAt: 10, id: 1, value: 1, firstAttempt: true },
      { startedAt: 10, id: 4, value: 2, firstAttempt: false },
      { startedAt: 12, id: 2, value: 4, firstAttempt: true },
    ])
    expect(tail.after(true, 0, { startedAt: 10, id: 3, value: 0 })).toEqual({ count: 2, sumD: 6 })
    expect(tail.after(false, 0, { startedAt: 10, id: 3, value: 0 })).toEqual({ count: 1, sumD: 4 })
    expect(tail.after(true, 1, { startedAt: 9, id: 9, value: 0 })).toEqual({ count: 3, sumD: 4 })
    expect(tail.after(true, 0, { startedAt: 13, id: 1, value: 0 })).toEqual({ count: 0, sumD: 0 })
  })
})

import { mean as ssMean, sampleStandardDeviation } from 'simple-statistics'
import { describe, expect, it } from 'vitest'
import { mergeStationRows, sampledGroups } from '../../../server/services/analytics/lot-summary'
import { bookOf } from '../../../server/services/analytics/revision-limits'
import type { RevisionInForce, SpecLimit } from '../../../server/database/repositories/spec-lookup'
import type { ParamStatsRow } from '../../../server/database/repositories/lot-stats'

const limit = (lsl: number, usl: number): SpecLimit => ({
  step: 'final', name: 'output_power', qualifier: 0, lsl, usl, target: null, unit: 'dBm', required: true, rule: 'simple', defaultUncertainty: null, key: true,
})
const REVISIONS: RevisionInForce[] = [
  // newest effective first, as listEffectiveRevisions gives them
  { id: 41, revision: 3, effectiveAt: new Date('2026-11-20T00:00:00Z'), approvedAt: new Date('2026-11-18T09:30:00Z'), status: 'approved', limits: [limit(10.5, 13)] },
  { id: 17, revision: 2, effectiveAt: new Date('2026-10-01T00:00:00Z'), approvedAt: new Date('2026-09-29T14:00:00Z'), status: 'superseded', limits: [limit(8, 12)] },
]

/** A station row of one revision, sums about the first value as the fold keeps them. */
function row(revisionId: number, stationId: number, values: number[]): ParamStatsRow {
  const shift = values[0]!
  let mrSum = 0
  values.forEach((x, i) => { if (i > 0) mrSum += Math.abs(x - values[i - 1]!) })
  return {
    step: 'final', name: 'output_power', qualifier: 0, revisionId, stationId, unit: 'dBm', n: values.length, shift,
    sumD: values.reduce((s, x) => s + (x - shift), 0), sumSqD: values.reduce((s, x) => s + (x - shift) ** 2, 0),
    min: Math.min(...values), max: Math.max(...values), mrSum, mrN: values.length - 1, outOfSpec: 0, failAll: 0,
  }
}

describe('the revision book', () => {
  it('gives each revision id its number and its own limits, and orders judged revisions oldest first', () => {
    const book = bookOf(REVISIONS)
    expect(book.tag(17)).toEqual({ revisionId: 17, revision: 2, approvedAt: '2026-09-29T14:00:00.000Z' })
    expect(book.tag(0)).toEqual({ revisionId: 0, revision: null, approvedAt: null })
    expect(book.limitFor(17, { step: 'final', name: 'output_power', qualifier: 0 })?.lsl).toBe(8)
    expect(book.limitFor(41, { step: 'final', name: 'output_power', qualifier: 0 })?.lsl).toBe(10.5)
    expect(book.limitFor(41, { step: 'final', name: 'phase_noise', qualifier: 1000 })).toBeUndefined()
    expect(book.judged([41, 17, 41, 0]).map((r) => r.revision)).toEqual([null, 2, 3])
    expect(book.idOf(3)).toBe(41)
    expect(book.idOf(9)).toBeUndefined()
  })
})

describe('merging station rows', () => {
  it('adds stations within a revision and never across revisions (simple-statistics reference)', () => {
    const a2 = [9.9, 10.2, 9.7, 10.1]
    const b2 = [10.4, 9.8, 10.0]
    const a3 = [10.3, 10.0, 10.6]
    const merged = mergeStationRows([row(17, 1, a2), row(17, 2, b2), row(41, 1, a3)])
    expect(merged).toHaveLength(2)
    const rev2 = merged.find((m) => m.revisionId === 17)!
    const rev3 = merged.find((m) => m.revisionId === 41)!
    expect(rev2.n).toBe(7)
    expect(rev2.mean!).toBeCloseTo(ssMean([...a2, ...b2]), 12)
    expect(rev2.sd!).toBeCloseTo(sampleStandardDeviation([...a2, ...b2]), 12)
    // moving ranges stay within each station's sequence: 3 + 2 ranges
    expect(rev2.mrN).toBe(5)
    expect(rev3.n).toBe(3)
    expect(rev3.mean!).toBeCloseTo(ssMean(a3), 12)
  })

  it('lists a revision without sampled values only when the parameter has no sampled revision at all', () => {
    const book = bookOf(REVISIONS)
    const empty = { ...row(41, 1, [10]), n: 0 }
    const kept = sampledGroups(mergeStationRows([row(17, 1, [9.9, 10.1]), empty]), book)
    expect(kept.map((g) => g.revisionId)).toEqual([17])
    const onlyEmpty = sampledGroups(mergeStationRows([{ ...row(17, 1, [10]), n: 0 }, empty]), book)
    expect(onlyEmpty.map((g) => g.revisionId)).toEqual([41])
  })
})

import { describe, expect, it } from 'vitest'
import {
  instrumentsHeldAt, judgeInstruments, lapsedAt, recordInForce, spanCovers, spansOverlap, type CalibrationSpan, type HoldingSpan,
} from '../../../shared/utils/calibration-history'

// Dates are written out; the rule under test is common practice in calibration control: an instrument may be used up
// to, but not at or after, the due date on its certificate, and a withdrawn certificate no longer covers its use.
const d = (s: string) => new Date(s)
const rec = (id: number, instrumentId: number, calibratedOn: string, dueAt: string, supersededFrom: string | null = null): CalibrationSpan =>
  ({ id, instrumentId, calibratedOn: d(calibratedOn), dueAt: d(dueAt), supersededFrom: supersededFrom ? d(supersededFrom) : null })
const hold = (instrumentId: number, stationId: number, from: string, until: string | null = null): HoldingSpan =>
  ({ instrumentId, stationId, from: d(from), until: until ? d(until) : null })

describe('holdings', () => {
  it('cover their start and not their end', () => {
    const h = hold(1, 7, '2031-01-01T00:00:00Z', '2031-02-01T00:00:00Z')
    expect(spanCovers(h, d('2031-01-01T00:00:00Z'))).toBe(true)
    expect(spanCovers(h, d('2031-01-31T23:59:59.999Z'))).toBe(true)
    expect(spanCovers(h, d('2031-02-01T00:00:00Z'))).toBe(false)
    expect(spanCovers(h, d('2030-12-31T23:59:59.999Z'))).toBe(false)
    expect(spanCovers(hold(1, 7, '2031-01-01T00:00:00Z'), d('2040-01-01T00:00:00Z'))).toBe(true)
  })

  it('overlap only when they share an instant: back-to-back holdings do not', () => {
    const a = { from: d('2031-01-01T00:00:00Z'), until: d('2031-02-01T00:00:00Z') }
    expect(spansOverlap(a, { from: d('2031-02-01T00:00:00Z'), until: null })).toBe(false)
    expect(spansOverlap(a, { from: d('2031-01-31T00:00:00Z'), until: null })).toBe(true)
    expect(spansOverlap({ from: d('2030-01-01T00:00:00Z'), until: null }, a)).toBe(true)
    expect(spansOverlap(a, { from: d('2030-06-01T00:00:00Z'), until: d('2031-01-01T00:00:00Z') })).toBe(false)
  })

  it('follow an instrument moved between stations: each station holds it on its own side of the move', () => {
    const moved = [hold(5, 1, '2031-01-01T00:00:00Z', '2031-03-10T12:00:00Z'), hold(5, 2, '2031-03-10T12:00:00Z')]
    const before = d('2031-03-10T11:59:59Z')
    const at = d('2031-03-10T12:00:00Z')
    expect(instrumentsHeldAt(moved, 1, before)).toEqual([5])
    expect(instrumentsHeldAt(moved, 2, before)).toEqual([])
    expect(instrumentsHeldAt(moved, 1, at)).toEqual([])
    expect(instrumentsHeldAt(moved, 2, at)).toEqual([5])
  })
})

describe('the record in force', () => {
  const a = rec(1, 9, '2030-01-10T00:00:00Z', '2031-01-10T00:00:00Z')
  const b = rec(2, 9, '2030-12-20T00:00:00Z', '2031-12-20T00:00:00Z')

  it('is none before the first calibration, then the latest calibration up to the instant', () => {
    expect(recordInForce([a, b], 9, d('2030-01-09T23:59:59Z'))).toBeNull()
    expect(recordInForce([a, b], 9, d('2030-01-10T00:00:00Z'))?.id).toBe(1)
    expect(recordInForce([a, b], 9, d('2030-12-19T23:59:59Z'))?.id).toBe(1)
    expect(recordInForce([b, a], 9, d('2030-12-20T00:00:00Z'))?.id).toBe(2)
    expect(recordInForce([a, b], 8, d('2031-06-01T00:00:00Z'))).toBeNull()
  })

  it('stops at its supersession; an earlier record still within its dates takes over again', () => {
    const withdrawn = rec(2, 9, '2030-12-20T00:00:00Z', '2031-12-20T00:00:00Z', '2031-01-05T00:00:00Z')
    expect(recordInForce([a, withdrawn], 9, d('2031-01-04T23:59:59Z'))?.id).toBe(2)
    expect(recordInForce([a, withdrawn], 9, d('2031-01-05T00:00:00Z'))?.id).toBe(1)
    // superseded from its own calibration date: it was never in force (a reissued certificate)
    const reissued = [rec(3, 4, '2030-05-01T00:00:00Z', '2031-05-01T00:00:00Z', '2030-05-01T00:00:00Z'), rec(4, 4, '2030-05-01T00:00:00Z', '2031-05-01T00:00:00Z')]
    expect(recordInForce(reissued, 4, d('2030-05-01T00:00:00Z'))?.id).toBe(4)
  })

  it('between two records calibrated the same moment, the later entry wins', () => {
    expect(recordInForce([rec(7, 3, '2030-05-01T00:00:00Z', '2031-05-01T00:00:00Z'), rec(6, 3, '2030-05-01T00:00:00Z', '2031-04-01T00:00:00Z')], 3, d('2030-06-01T00:00:00Z'))?.id).toBe(7)
  })
})

describe('lapse at the test time', () => {
  const r = rec(1, 9, '2030-01-10T00:00:00Z', '2031-01-10T00:00:00Z')

  it('counts a test exactly at the due instant as lapsed, one millisecond before as not', () => {
    expect(lapsedAt(r, d('2031-01-10T00:00:00.000Z'))).toBe(true)
    expect(lapsedAt(r, d('2031-01-09T23:59:59.999Z'))).toBe(false)
    expect(lapsedAt(null, d('2031-01-01T00:00:00Z'))).toBe(true)
  })

  it('judges each instrument and flags the run when any is past due or has no record in force', () => {
    const records = [r, rec(2, 10, '2030-06-01T00:00:00Z', '2032-06-01T00:00:00Z')]
    expect(judgeInstruments([9, 10], records, d('2030-12-01T00:00:00Z'))).toEqual({ instruments: [{ instrumentId: 9, calibrationId: 1 }, { instrumentId: 10, calibrationId: 2 }], lapsed: false })
    expect(judgeInstruments([9, 10], records, d('2031-01-10T00:00:00Z')).lapsed).toBe(true)
    expect(judgeInstruments([9, 11], records, d('2030-12-01T00:00:00Z'))).toEqual({ instruments: [{ instrumentId: 9, calibrationId: 1 }, { instrumentId: 11, calibrationId: null }], lapsed: true })
    expect(judgeInstruments([], records, d('2030-12-01T00:00:00Z'))).toEqual({ instruments: [], lapsed: false })
  })

  it('a record superseded in the middle of a lot covers the runs before and not those after', () => {
    const withdrawn = [rec(1, 9, '2030-01-10T00:00:00Z', '2031-01-10T00:00:00Z', '2030-09-15T08:00:00Z')]
    const runs = ['2030-09-14T16:00:00Z', '2030-09-15T07:59:59Z', '2030-09-15T08:00:00Z', '2030-09-16T10:00:00Z'].map(d)
    expect(runs.map((t) => judgeInstruments([9], withdrawn, t).lapsed)).toEqual([false, false, true, true])
    expect(runs.map((t) => judgeInstruments([9], withdrawn, t).instruments[0]!.calibrationId)).toEqual([1, 1, null, null])
  })
})

import { describe, expect, it } from 'vitest'
import { decisionNeedsReason, impactWindow, inImpactWindow, type ImpactRecord } from '../../../shared/utils/calibration-impact'

// Common practice in calibration control (e.g. the out-of-tolerance evaluation of ISO/IEC 17025 §7.10 and ISO 10012):
// when an instrument is found out of tolerance, what it measured since it was last found in tolerance is in doubt.
// Dates are written out so each edge is visible.
const d = (s: string) => new Date(s)
const rec = (id: number, calibratedOn: string, asFound: ImpactRecord['asFound'], supersededFrom: string | null = null): ImpactRecord =>
  ({ id, calibratedOn: d(calibratedOn), asFound, supersededFrom: supersededFrom ? d(supersededFrom) : null })

describe('the window an out-of-tolerance finding puts in doubt', () => {
  it('runs from the latest earlier in-tolerance calibration up to the finding', () => {
    const records = [rec(1, '2030-01-10T00:00:00Z', 'in_tolerance'), rec(2, '2031-01-10T00:00:00Z', 'in_tolerance'), rec(3, '2032-01-10T00:00:00Z', 'out_of_tolerance')]
    expect(impactWindow(records, records[2]!)).toEqual({ from: d('2031-01-10T00:00:00Z'), to: d('2032-01-10T00:00:00Z'), basis: { kind: 'in_tolerance', recordId: 2 } })
  })

  it('includes a run at the opening calibration and excludes one at the finding itself', () => {
    const w = { from: d('2031-01-10T00:00:00Z'), to: d('2032-01-10T00:00:00Z') }
    expect(inImpactWindow(w, d('2031-01-10T00:00:00Z'))).toBe(true)
    expect(inImpactWindow(w, d('2031-01-09T23:59:59.999Z'))).toBe(false)
    expect(inImpactWindow(w, d('2032-01-09T23:59:59.999Z'))).toBe(true)
    expect(inImpactWindow(w, d('2032-01-10T00:00:00Z'))).toBe(false)
  })

  it('reaches back past records carried over without an as-found result and past earlier out-of-tolerance findings', () => {
    const records = [
      rec(1, '2030-01-10T00:00:00Z', 'in_tolerance'), rec(2, '2030-07-10T00:00:00Z', null),
      rec(3, '2031-01-10T00:00:00Z', 'out_of_tolerance'), rec(4, '2031-07-10T00:00:00Z', 'out_of_tolerance'),
    ]
    expect(impactWindow(records, records[3]!)).toMatchObject({ from: d('2030-01-10T00:00:00Z'), basis: { kind: 'in_tolerance', recordId: 1 } })
  })

  it('opens at the earliest record when none was found in tolerance, and is empty when the finding is the first record', () => {
    const records = [rec(5, '2030-03-01T00:00:00Z', null), rec(6, '2030-09-01T00:00:00Z', 'out_of_tolerance')]
    expect(impactWindow(records, records[1]!)).toEqual({ from: d('2030-03-01T00:00:00Z'), to: d('2030-09-01T00:00:00Z'), basis: { kind: 'earliest', recordId: 5 } })
    const alone = [rec(7, '2030-09-01T00:00:00Z', 'out_of_tolerance')]
    const w = impactWindow(alone, alone[0]!)!
    expect(w.basis).toEqual({ kind: 'earliest', recordId: 7 })
    expect(inImpactWindow(w, d('2030-08-31T00:00:00Z'))).toBe(false)
    expect(inImpactWindow(w, d('2030-09-01T00:00:00Z'))).toBe(false)
  })

  it('ignores a later in-tolerance record and one withdrawn from its own date, but keeps one superseded later', () => {
    const records = [
      rec(1, '2030-01-01T00:00:00Z', 'in_tolerance', '2030-03-01T00:00:00Z'),
      rec(2, '2030-06-01T00:00:00Z', 'in_tolerance', '2030-06-01T00:00:00Z'),
      rec(3, '2031-01-01T00:00:00Z', 'out_of_tolerance'),
      rec(4, '2031-06-01T00:00:00Z', 'in_tolerance'),
    ]
    expect(impactWindow(records, records[2]!)).toMatchObject({ from: d('2030-01-01T00:00:00Z'), basis: { recordId: 1 } })
  })

  it('has no window for a record found in tolerance or without a result', () => {
    const records = [rec(1, '2030-01-01T00:00:00Z', 'in_tolerance'), rec(2, '2031-01-01T00:00:00Z', null)]
    expect(impactWindow(records, records[0]!)).toBeNull()
    expect(impactWindow(records, records[1]!)).toBeNull()
  })
})

describe('decisions', () => {
  it('need a reason except "no impact"', () => {
    expect(decisionNeedsReason('no_impact')).toBe(false)
    expect(decisionNeedsReason('retest')).toBe(true)
    expect(decisionNeedsReason('recall')).toBe(true)
  })
})

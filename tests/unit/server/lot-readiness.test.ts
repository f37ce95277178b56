import { describe, expect, it } from 'vitest'
import { lotReadiness, type UnitStepRow } from '../../../server/services/lot-readiness'

const STEPS = ['tune', 'burn-in', 'final']
const row = (serial: string, step: string | null, latestVerdict: 'pass' | 'fail' | null = 'pass', calibrationLapsed = false): UnitStepRow => ({ serial, step, latestVerdict, calibrationLapsed })

describe('lotReadiness', () => {
  it('passes a unit with a passing latest result at every step', () => {
    const r = lotReadiness(STEPS.map((s) => row('A1', s)), STEPS)
    expect(r).toEqual({ units: 1, notReady: [] })
  })

  it('names each missing step, each failing latest result and each result taken past a calibration date', () => {
    const rows = [
      row('B2', 'tune'), row('B2', 'final', 'fail'),
      row('A1', 'tune'), row('A1', 'burn-in'), row('A1', 'final', 'pass', true),
      row('C3', null),
      ...STEPS.map((s) => row('D4', s)),
    ]
    const r = lotReadiness(rows, STEPS)
    expect(r.units).toBe(4)
    expect(r.notReady).toEqual([
      { serial: 'A1', problems: ['latest final result was taken past a calibration due date'] },
      { serial: 'B2', problems: ['no result at burn-in', 'latest final result is a fail'] },
      { serial: 'C3', problems: ['no result at tune', 'no result at burn-in', 'no result at final'] },
    ])
  })

  it('ignores results at steps the product no longer has, and counts a lot without units as empty', () => {
    expect(lotReadiness([row('A1', 'final'), row('A1', 'retired-step', 'fail')], ['final']).notReady).toEqual([])
    expect(lotReadiness([], STEPS)).toEqual({ units: 0, notReady: [] })
  })
})

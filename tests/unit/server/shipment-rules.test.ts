import { describe, expect, it } from 'vitest'
import { parseSerialLines } from '../../../server/services/shipments/serial-list'
import { unitProblems } from '../../../server/services/shipments/unit-checks'
import { overallVerdict } from '../../../server/services/shipments/unit-verdict'

describe('reading a list of serials', () => {
  it('skips a header and blank lines, reads part,serial with comma, semicolon or tab, and drops quotes and CR', () => {
    const rows = parseSerialLines(['Part number,Serial', 'A1', '', 'VFW-T3-375;B2\r', '"VFW-D2-250"\t"C3"', 'x,y,z', ','])
    expect(rows.map((r) => [r.line, r.partNumber, r.serial, r.malformed !== null])).toEqual([
      [2, null, 'A1', false], [4, 'VFW-T3-375', 'B2', false], [5, 'VFW-D2-250', 'C3', false], [6, null, null, true], [7, null, null, true],
    ])
  })
  it('numbers lines from firstLine, so a list checked in parts keeps its line numbers, and reads a header only on line 1', () => {
    expect(parseSerialLines(['serial', 'Z9'], 501).map((r) => [r.line, r.serial])).toEqual([[501, 'serial'], [502, 'Z9']])
  })
})

describe('whether a unit may ship', () => {
  const unit = { unitId: 1, productId: 1, partNumber: 'P', serial: 'S', lot: 'L', lotStatus: 'released', steps: ['tune', 'final'] }
  const pass = (step: string, attempts = 1) => ({ step, attempts, latestVerdict: 'pass' as const, calibrationLapsed: false })
  it('passes a unit of a released lot passing every step within its limits', () => {
    expect(unitProblems(unit, [pass('tune'), pass('final')], new Map([['final', 2]]), [])).toEqual([])
    expect(overallVerdict(unit.steps, [pass('tune'), pass('final')])).toBe('pass')
    expect(overallVerdict(unit.steps, [pass('final')])).toBeNull()
  })
  it('needs a rework or deviation made at no fewer attempts than the unit now has; scrap is hard', () => {
    const limits = new Map([['final', 2]])
    const states = [pass('tune'), pass('final', 3)]
    expect(unitProblems(unit, states, limits, []).map((p) => p.text)).toEqual(['3 attempts at final exceed the retest limit of 2 with no rework or deviation decision'])
    expect(unitProblems(unit, states, limits, [{ step: 'final', kind: 'rework', reason: 'r', atAttempts: 2 }])).toHaveLength(1)
    expect(unitProblems(unit, states, limits, [{ step: 'final', kind: 'deviation', reason: 'r', atAttempts: 3 }])).toEqual([])
    expect(unitProblems(unit, [pass('tune'), pass('final')], undefined, [{ step: 'tune', kind: 'scrap', reason: 'cracked', atAttempts: 1 }])).toEqual([{ text: 'scrapped at tune: cracked', hard: true }])
  })
  it('names a held or unreleased lot, a missing step, a fail and a lapsed calibration', () => {
    const held = unitProblems({ ...unit, lotStatus: 'on_hold' }, [{ ...pass('tune'), calibrationLapsed: true }, { ...pass('final'), latestVerdict: 'fail' }], undefined, [])
    expect(held).toEqual([
      { text: 'lot L is on hold', hard: true },
      { text: 'latest tune result was taken past a calibration due date', hard: false },
      { text: 'latest final result is a fail', hard: false },
    ])
    expect(unitProblems({ ...unit, lotStatus: 'open' }, [pass('final')], undefined, []).map((p) => p.text)).toEqual(['lot L is not released', 'no result at tune'])
  })
})

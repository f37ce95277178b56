import { describe, expect, it } from 'vitest'
import { calibrationState, dueInstant, worstCalibration } from '../../../shared/utils/calibration'

const NOW = new Date('2031-03-01T12:00:00Z')
const at = (ms: number) => new Date(NOW.getTime() + ms)
const DAY = 86_400_000

describe('calibration state', () => {
  it('is lapsed from the due instant on', () => {
    expect(calibrationState(at(0), NOW)).toBe('lapsed')
    expect(calibrationState(at(-DAY), NOW)).toBe('lapsed')
    expect(calibrationState(at(1), NOW)).toBe('due_soon')
  })

  it('is due soon up to and including 30 days ahead', () => {
    expect(calibrationState(at(30 * DAY), NOW)).toBe('due_soon')
    expect(calibrationState(at(30 * DAY + 1), NOW)).toBe('ok')
    expect(calibrationState('2031-06-01T00:00:00Z', NOW)).toBe('ok')
  })

  it('refuses something that is not a date', () => {
    expect(() => calibrationState('soon', NOW)).toThrow(RangeError)
  })

  it('takes the worst state, and none for no instruments', () => {
    expect(worstCalibration([])).toBeNull()
    expect(worstCalibration(['ok', 'ok'])).toBe('ok')
    expect(worstCalibration(['ok', 'due_soon', 'ok'])).toBe('due_soon')
    expect(worstCalibration(['lapsed', 'due_soon', 'ok'])).toBe('lapsed')
  })

  it('reads a bare date as 00:00 UTC and keeps a date-time as given', () => {
    expect(dueInstant('2031-03-01').toISOString()).toBe('2031-03-01T00:00:00.000Z')
    expect(dueInstant('2031-03-01T08:00:00+02:00').toISOString()).toBe('2031-03-01T06:00:00.000Z')
    expect(calibrationState(dueInstant('2031-03-01'), NOW)).toBe('lapsed')
  })
})

describe('calibration state with a due-soon period set by an administrator', () => {
  it('is due soon up to and including the given number of days ahead', () => {
    expect(calibrationState(at(45 * DAY), NOW, 45)).toBe('due_soon')
    expect(calibrationState(at(45 * DAY + 1), NOW, 45)).toBe('ok')
    expect(calibrationState(at(8 * DAY), NOW, 7)).toBe('ok')
    expect(calibrationState(at(0), NOW, 7)).toBe('lapsed')
  })
})

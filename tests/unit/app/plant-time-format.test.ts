// What the pages print for an instant on the plant's clock, and the datetime-local field round trip.
import { describe, expect, it } from 'vitest'
import { isoToPlantField, plantDayRange, plantFieldToIso, plantStamp, utcTitle } from '../../../app/utils/plant-time'

describe('plantStamp', () => {
  it('prints the Berlin wall clock (CET is UTC+1 in December, CEST UTC+2 in July) and UTC on hover', () => {
    expect(plantStamp('2026-12-02T16:05:09.400Z', 'Europe/Berlin')).toBe('2026-12-02 17:05')
    expect(plantStamp('2026-12-02T16:05:09.400Z', 'Europe/Berlin', 'seconds')).toBe('2026-12-02 17:05:09')
    expect(plantStamp('2026-07-01T22:30:00Z', 'Europe/Berlin', 'date')).toBe('2026-07-02')
    expect(plantStamp('2026-07-01T22:30:00Z', 'Europe/Berlin', 'clock')).toBe('00:30')
    expect(utcTitle('2026-12-02T16:05:09.400Z')).toBe('2026-12-02 16:05:09 UTC')
  })
  it('prints a dash for no time', () => {
    expect(plantStamp(null, 'UTC')).toBe('—')
    expect(plantStamp('not a time', 'UTC')).toBe('—')
  })
  it('reads a form field on the plant clock and back', () => {
    expect(plantFieldToIso('2026-12-02T17:05', 'Europe/Berlin')).toBe('2026-12-02T16:05:00.000Z')
    expect(plantFieldToIso('2026-07-02T00:30', 'Europe/Berlin')).toBe('2026-07-01T22:30:00.000Z')
    expect(isoToPlantField('2026-12-02T16:05:00Z', 'Europe/Berlin')).toBe('2026-12-02T17:05')
  })
})

describe('plantDayRange', () => {
  // EU summer time ends at 01:00 UTC on the last Sunday of October (2026-10-25): Berlin goes from UTC+2 to UTC+1
  it('turns day filters into the plant\'s midnights, a 25-hour day when the clocks go back', () => {
    expect(plantDayRange('2026-10-25', '2026-10-25', 'Europe/Berlin')).toEqual({ from: '2026-10-24T22:00:00.000Z', to: '2026-10-25T23:00:00.000Z' })
    expect(plantDayRange('2026-12-31', '2026-12-31', 'Europe/Berlin')).toEqual({ from: '2026-12-30T23:00:00.000Z', to: '2026-12-31T23:00:00.000Z' })
    expect(plantDayRange('2026-12-01', '', 'UTC')).toEqual({ from: '2026-12-01T00:00:00.000Z' })
    expect(plantDayRange('', '', 'UTC')).toEqual({})
  })
})

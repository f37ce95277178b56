// Plant days and wall-clock readings in zones with and without daylight-saving time. The expected instants are written
// by hand from the published rules: EU summer time begins and ends at 01:00 UTC on the last Sunday of March and of
// October (Directive 2000/84/EC), so 2026-03-29 and 2026-10-25; US daylight time begins at 02:00 local time on the
// second Sunday of March (Energy Policy Act of 2005, 15 U.S.C. § 260a), so 2026-03-08; India keeps UTC+05:30 all year.
import { describe, expect, it } from 'vitest'
import {
  canonicalTimeZone, isValidTimeZone, plantDay, plantDayEnd, plantDayStart, wallTime, wallTimeToInstant, zoneOffsetMs,
} from '../../../shared/utils/plant-time'

const iso = (d: Date) => d.toISOString()
const HOUR = 3_600_000

describe('plant day in Europe/Berlin', () => {
  const zone = 'Europe/Berlin'
  it('an ordinary winter day runs from 23:00 UTC the evening before, 24 hours', () => {
    const at = new Date('2026-12-02T16:05:00Z')
    expect(iso(plantDayStart(at, zone))).toBe('2026-12-01T23:00:00.000Z')
    expect(iso(plantDayEnd(at, zone))).toBe('2026-12-02T23:00:00.000Z')
  })
  it('the spring-forward day (2026-03-29) starts at CET midnight and lasts 23 hours', () => {
    const at = new Date('2026-03-29T12:00:00Z')
    expect(iso(plantDayStart(at, zone))).toBe('2026-03-28T23:00:00.000Z')
    expect(iso(plantDayEnd(at, zone))).toBe('2026-03-29T22:00:00.000Z')
    expect(plantDayEnd(at, zone).getTime() - plantDayStart(at, zone).getTime()).toBe(23 * HOUR)
  })
  it('the fall-back day (2026-10-25) starts at CEST midnight and lasts 25 hours', () => {
    const at = new Date('2026-10-25T12:00:00Z')
    expect(iso(plantDayStart(at, zone))).toBe('2026-10-24T22:00:00.000Z')
    expect(iso(plantDayEnd(at, zone))).toBe('2026-10-25T23:00:00.000Z')
    expect(plantDayEnd(at, zone).getTime() - plantDayStart(at, zone).getTime()).toBe(25 * HOUR)
  })
  it('an instant belongs to the plant day of its local date, whatever its UTC date', () => {
    // 22:30 UTC on the 24th is 00:30 CEST on the 25th; 22:59:59.999 UTC on the 28th of March is 23:59:59.999 CET
    expect(plantDay(new Date('2026-10-24T22:30:00Z'), zone)).toBe('2026-10-25')
    expect(iso(plantDayStart(new Date('2026-10-24T22:30:00Z'), zone))).toBe('2026-10-24T22:00:00.000Z')
    expect(plantDay(new Date('2026-03-28T22:59:59.999Z'), zone)).toBe('2026-03-28')
    expect(plantDay(new Date('2026-03-28T23:00:00Z'), zone)).toBe('2026-03-29')
  })
  it('reads the wall clock on either side of the switch', () => {
    // the clocks go from 02:00 CET to 03:00 CEST at 01:00 UTC
    expect(wallTime(new Date('2026-03-29T00:59:59Z'), zone)).toMatchObject({ day: 29, hour: 1, minute: 59, second: 59 })
    expect(wallTime(new Date('2026-03-29T01:00:00Z'), zone)).toMatchObject({ day: 29, hour: 3, minute: 0 })
    expect(zoneOffsetMs(new Date('2026-03-29T00:59:59Z'), zone)).toBe(1 * HOUR)
    expect(zoneOffsetMs(new Date('2026-03-29T01:00:00Z'), zone)).toBe(2 * HOUR)
  })
  it('turns wall times into instants: a skipped time moves on by the hour, a doubled one is its first occurrence', () => {
    expect(iso(wallTimeToInstant({ year: 2026, month: 3, day: 29, hour: 1, minute: 30 }, zone))).toBe('2026-03-29T00:30:00.000Z')
    expect(iso(wallTimeToInstant({ year: 2026, month: 3, day: 29, hour: 2, minute: 30 }, zone))).toBe('2026-03-29T01:30:00.000Z')
    expect(iso(wallTimeToInstant({ year: 2026, month: 3, day: 29, hour: 3, minute: 30 }, zone))).toBe('2026-03-29T01:30:00.000Z')
    // 02:30 happens at 00:30 UTC (CEST) and again at 01:30 UTC (CET)
    expect(iso(wallTimeToInstant({ year: 2026, month: 10, day: 25, hour: 2, minute: 30 }, zone))).toBe('2026-10-25T00:30:00.000Z')
  })
})

describe('plant day in America/New_York', () => {
  const zone = 'America/New_York'
  it('the spring-forward day (2026-03-08) runs from 05:00 UTC (EST) to 04:00 UTC the next day (EDT), 23 hours', () => {
    const at = new Date('2026-03-08T15:00:00Z')
    expect(iso(plantDayStart(at, zone))).toBe('2026-03-08T05:00:00.000Z')
    expect(iso(plantDayEnd(at, zone))).toBe('2026-03-09T04:00:00.000Z')
  })
  it('an instant after UTC midnight but before local midnight is still the previous plant day', () => {
    const at = new Date('2026-12-03T02:00:00Z') // 21:00 EST on the 2nd
    expect(plantDay(at, zone)).toBe('2026-12-02')
    expect(iso(plantDayStart(at, zone))).toBe('2026-12-02T05:00:00.000Z')
  })
})

describe('zones without daylight-saving time', () => {
  it('UTC days are UTC days', () => {
    const at = new Date('2026-03-29T12:00:00Z')
    expect(iso(plantDayStart(at, 'UTC'))).toBe('2026-03-29T00:00:00.000Z')
    expect(iso(plantDayEnd(at, 'UTC'))).toBe('2026-03-30T00:00:00.000Z')
  })
  it('a half-hour offset (Asia/Kolkata, UTC+05:30)', () => {
    expect(iso(plantDayStart(new Date('2026-12-02T20:00:00Z'), 'Asia/Kolkata'))).toBe('2026-12-02T18:30:00.000Z')
    expect(zoneOffsetMs(new Date('2026-06-01T00:00:00Z'), 'Asia/Kolkata')).toBe(5.5 * HOUR)
  })
})

describe('time zone names', () => {
  it('accepts IANA names the runtime knows, in their canonical spelling, and nothing else', () => {
    expect(canonicalTimeZone('Europe/Berlin')).toBe('Europe/Berlin')
    expect(canonicalTimeZone('europe/berlin')).toBe('Europe/Berlin')
    expect(isValidTimeZone('UTC')).toBe(true)
    for (const bad of ['Mars/Olympus_Mons', '', '   ', 'Europe/Berlin; DROP', 42, null]) expect(isValidTimeZone(bad)).toBe(false)
  })
})

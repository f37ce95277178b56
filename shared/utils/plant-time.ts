// Plant time: the site's IANA time zone turns stored UTC instants into the wall-clock times people on the floor read,
// and gives the instant a plant day starts. Pure (Intl only), used by the server's day counts and the pages alike.

export const DEFAULT_PLANT_TIME_ZONE = 'Europe/Berlin'

const formatters = new Map<string, Intl.DateTimeFormat>()

function partsFormatter(zone: string): Intl.DateTimeFormat {
  let f = formatters.get(zone)
  if (!f) {
    f = new Intl.DateTimeFormat('en-GB', {
      timeZone: zone, hourCycle: 'h23', year: 'numeric', month: '2-digit', day: '2-digit', hour: '2-digit', minute: '2-digit', second: '2-digit',
    })
    formatters.set(zone, f)
  }
  return f
}

/** The runtime's spelling of a time zone name it knows ("europe/berlin" → "Europe/Berlin"), or null. */
export function canonicalTimeZone(zone: unknown): string | null {
  if (typeof zone !== 'string' || !zone.trim() || zone.length > 64) return null
  try {
    return new Intl.DateTimeFormat('en-GB', { timeZone: zone }).resolvedOptions().timeZone
  } catch {
    return null
  }
}

/** True for a time zone name the runtime's time-zone data knows (e.g. "Europe/Berlin", "UTC"). */
export function isValidTimeZone(zone: unknown): zone is string {
  return canonicalTimeZone(zone) !== null
}

export type WallTime = { year: number; month: number; day: number; hour: number; minute: number; second: number }

/** The wall-clock reading in `zone` at an instant (month 1–12). */
export function wallTime(instant: Date | number, zone: string): WallTime {
  const parts = partsFormatter(zone).formatToParts(new Date(instant))
  const n = (type: string) => Number(parts.find((p) => p.type === type)?.value)
  return { year: n('year'), month: n('month'), day: n('day'), hour: n('hour') % 24, minute: n('minute'), second: n('second') }
}

/** How far `zone` is ahead of UTC at an instant, in milliseconds (whole seconds). */
export function zoneOffsetMs(instant: Date | number, zone: string): number {
  const t = new Date(instant).getTime()
  const w = wallTime(t, zone)
  return Date.UTC(w.year, w.month - 1, w.day, w.hour, w.minute, w.second) - Math.floor(t / 1000) * 1000
}

/**
 * The instant a wall-clock time in `zone` happens. A time the clocks skip (spring forward) moves on by the skipped
 * hour, as the clocks did (so a skipped midnight is the moment they jump); a time that happens twice (fall back) is its
 * first occurrence.
 */
export function wallTimeToInstant(w: Omit<WallTime, 'second'> & { second?: number }, zone: string): Date {
  const asUtc = Date.UTC(w.year, w.month - 1, w.day, w.hour, w.minute, w.second ?? 0)
  // the offsets a day before and after bracket any single transition near this wall time
  const early = zoneOffsetMs(asUtc - 86_400_000, zone)
  const late = zoneOffsetMs(asUtc + 86_400_000, zone)
  const candidates = [...new Set([early, late, zoneOffsetMs(asUtc, zone)])].map((o) => asUtc - o)
    .filter((t) => zoneOffsetMs(t, zone) === asUtc - t)
    .sort((a, b) => a - b)
  if (candidates.length) return new Date(candidates[0]!)
  // skipped: the wall time lies in the gap, so the day or hour starts when the clocks jump (the later reading)
  return new Date(Math.max(asUtc - early, asUtc - late))
}

/** The plant day an instant falls in, as "YYYY-MM-DD". */
export function plantDay(instant: Date | number, zone: string): string {
  const w = wallTime(instant, zone)
  return `${w.year}-${String(w.month).padStart(2, '0')}-${String(w.day).padStart(2, '0')}`
}

/** The instant the plant day containing `instant` begins (its first moment, midnight unless the clocks skip it). */
export function plantDayStart(instant: Date | number, zone: string): Date {
  const w = wallTime(instant, zone)
  return wallTimeToInstant({ year: w.year, month: w.month, day: w.day, hour: 0, minute: 0 }, zone)
}

/** The instant the next plant day begins: the end (exclusive) of the day containing `instant`; 23, 24 or 25 hours on. */
export function plantDayEnd(instant: Date | number, zone: string): Date {
  const w = wallTime(instant, zone)
  const next = new Date(Date.UTC(w.year, w.month - 1, w.day + 1))
  return wallTimeToInstant({ year: next.getUTCFullYear(), month: next.getUTCMonth() + 1, day: next.getUTCDate(), hour: 0, minute: 0 }, zone)
}

/** The zone's short name at an instant ("CET", "CEST", "UTC"; a numeric offset where the runtime has no name). */
export function zoneAbbreviation(instant: Date | number, zone: string): string {
  const parts = new Intl.DateTimeFormat('en-GB', { timeZone: zone, timeZoneName: 'short' }).formatToParts(new Date(instant))
  return parts.find((p) => p.type === 'timeZoneName')?.value ?? zone
}

// Times on screen are plant time (the site's zone, GET /api/plant-time); UTC stays in exports, the API and the hover title.
import { wallTime, wallTimeToInstant, zoneAbbreviation } from '#shared/utils/plant-time'

const DASH = '—'
const pad = (n: number) => String(n).padStart(2, '0')

export type PlantForm = 'date' | 'minute' | 'seconds' | 'clock' | 'clockSeconds'

/** "YYYY-MM-DD" (date), "YYYY-MM-DD HH:MM" (minute), "… HH:MM:SS" (seconds), "HH:MM" (clock), "HH:MM:SS" (clockSeconds). */
export function plantStamp(value: string | Date | number | null | undefined, zone: string, form: PlantForm = 'minute'): string {
  if (value === null || value === undefined || value === '') return DASH
  const t = new Date(value)
  if (Number.isNaN(t.getTime())) return DASH
  const w = wallTime(t, zone)
  const date = `${w.year}-${pad(w.month)}-${pad(w.day)}`
  const hm = `${pad(w.hour)}:${pad(w.minute)}`
  switch (form) {
    case 'date': return date
    case 'seconds': return `${date} ${hm}:${pad(w.second)}`
    case 'clock': return hm
    case 'clockSeconds': return `${hm}:${pad(w.second)}`
    default: return `${date} ${hm}`
  }
}

/** The hover text: the same instant in UTC, to the second, as exports and the API give it. */
export function utcTitle(value: string | Date | number | null | undefined): string {
  if (value === null || value === undefined || value === '') return ''
  const t = new Date(value)
  return Number.isNaN(t.getTime()) ? '' : `${t.toISOString().slice(0, 19).replace('T', ' ')} UTC`
}

/** "CET", "CEST", "UTC": the plant zone's short name at that instant. */
export function plantZoneName(value: string | Date | number, zone: string): string {
  return zoneAbbreviation(new Date(value), zone)
}

/** A datetime-local field read on the plant's clock: "YYYY-MM-DDTHH:MM" → ISO 8601 in UTC. */
export function plantFieldToIso(value: string, zone: string): string {
  const [d, hm] = value.split('T') as [string, string | undefined]
  const [year, month, day] = d.split('-').map(Number) as [number, number, number]
  const [hour = 0, minute = 0, second = 0] = (hm ?? '').split(':').map(Number)
  return wallTimeToInstant({ year, month, day, hour, minute, second }, zone).toISOString()
}

/** The same field's value for an instant, on the plant's clock. */
export function isoToPlantField(value: string | Date, zone: string): string {
  return plantStamp(value, zone, 'minute').replace(' ', 'T')
}

/**
 * Date filters ("from" and "to" days, both included) as the instants the API takes: from the plant's midnight that
 * starts `from` to the one that ends `to`, so a day is the plant's day, 23 or 25 hours long on clock-change days.
 */
export function plantDayRange(from: string, to: string, zone: string): { from?: string; to?: string } {
  const out: { from?: string; to?: string } = {}
  if (from) out.from = plantFieldToIso(from, zone)
  if (to) {
    const [y, m, d] = to.split('-').map(Number) as [number, number, number]
    out.to = plantFieldToIso(new Date(Date.UTC(y, m - 1, d + 1)).toISOString().slice(0, 10), zone)
  }
  return out
}

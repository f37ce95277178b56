// Display-only rounding for analytics views: the API sends full precision, the screen shows what a reader needs.
import { utcMinute, utcSeconds } from './utc-time'

export const DASH = '—'

/** Fixed decimals with a thin-spaced thousands grouping; null/NaN → dash. */
export function fixed(v: number | null | undefined, decimals = 3): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return DASH
  const [int, frac] = Math.abs(v).toFixed(decimals).split('.') as [string, string | undefined]
  const grouped = int.replace(/\B(?=(\d{3})+(?!\d))/g, '\u2009')
  return (v < 0 && Number(v.toFixed(decimals)) !== 0 ? '−' : '') + grouped + (frac ? '.' + frac : '')
}

/** Enough decimals to show `significant` digits of the value's magnitude (at least 0, at most 9). */
export function sig(v: number | null | undefined, significant = 4): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return DASH
  if (v === 0) return '0'
  const magnitude = Math.floor(Math.log10(Math.abs(v)))
  return fixed(v, Math.min(9, Math.max(0, significant - 1 - magnitude)))
}

/** Decimals suited to a spread of `scale` (e.g. σ): values and σ of one parameter then line up. */
export function decimalsFor(scale: number | null | undefined, significant = 2): number {
  if (scale === null || scale === undefined || !Number.isFinite(scale) || scale <= 0) return 3
  return Math.min(9, Math.max(0, significant - 1 - Math.floor(Math.log10(scale))))
}

/** A value in the unit shown on screen: jitter is stored in seconds and read in femtoseconds. */
export function displayUnit(unit: string | null | undefined): { unit: string; scale: number } {
  if (unit === 's') return { unit: 'fs', scale: 1e15 }
  return { unit: unit ?? '', scale: 1 }
}

export function scaled(v: number | null | undefined, unit: string | null | undefined): number | null {
  if (v === null || v === undefined || !Number.isFinite(v)) return null
  return v * displayUnit(unit).scale
}

export function percent(p: number | null | undefined, decimals = 1): string {
  return p === null || p === undefined || !Number.isFinite(p) ? DASH : `${(100 * p).toFixed(decimals)} %`
}

/** "96.1 % (91.2–98.4)" for a proportion with its interval. */
export function yieldText(y: { p: number; lo: number; hi: number } | null | undefined): string {
  if (!y) return DASH
  return `${percent(y.p)} (${(100 * y.lo).toFixed(1)}–${(100 * y.hi).toFixed(1)})`
}

/** Capability indices to two decimals, with the same minus sign as other numbers and no "−0.00". */
export function index(v: number | null | undefined): string {
  return fixed(v, 2)
}

export function ppm(v: number | null | undefined): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return DASH
  if (v === 0) return '0'
  return v >= 100 ? fixed(v, 0) : v >= 1 ? v.toFixed(1) : v.toFixed(3)
}

export function pValue(p: number | null | undefined): string {
  if (p === null || p === undefined || !Number.isFinite(p)) return DASH
  return p < 0.0001 ? '< 0.0001' : p.toFixed(4)
}

export const BAND_WORDS: Record<string, string> = { capable: 'CAPABLE', marginal: 'MARGINAL', not_capable: 'NOT CAPABLE', too_few: 'FEW VALUES', unknown: 'NO INDEX' }

/** 2 → "100 Hz", 3 → "1 kHz", 6.5 → "3.16 MHz": labels for a log10(Hz) axis. */
export function logHzLabel(log10Hz: number): string {
  const hz = 10 ** log10Hz
  const [scale, unit] = hz >= 1e9 ? [1e9, 'GHz'] : hz >= 1e6 ? [1e6, 'MHz'] : hz >= 1e3 ? [1e3, 'kHz'] : [1, 'Hz']
  return `${Number.parseFloat((hz / scale).toPrecision(3))} ${unit}`
}

export function utcStamp(iso: string | null | undefined, withSeconds = false): string {
  return withSeconds ? utcSeconds(iso) : utcMinute(iso)
}


/** "4 s", "3 min 12 s", "2 h 5 min", "3 d" since a moment. */
export function ageText(fromIso: string | null | undefined, nowMs: number): string {
  if (!fromIso) return 'never'
  const s = Math.max(0, Math.floor((nowMs - new Date(fromIso).getTime()) / 1000))
  if (s < 60) return `${s} s`
  if (s < 3600) return `${Math.floor(s / 60)} min ${s % 60} s`
  if (s < 86_400) return `${Math.floor(s / 3600)} h ${Math.floor((s % 3600) / 60)} min`
  return `${Math.floor(s / 86_400)} d`
}

export const RULE_TEXT: Record<number, string> = {
  1: 'Rule 1: one point beyond 3σ from the centre line',
  2: 'Rule 2: two of three points beyond 2σ on the same side',
  3: 'Rule 3: four of five points beyond 1σ on the same side',
  4: 'Rule 4: eight points in a row on one side of the centre line',
}

/** "rev. 3"; values stored without a revision read "no rev.". */
export function revisionText(revision: number | null | undefined): string {
  return revision === null || revision === undefined ? 'no rev.' : `rev. ${revision}`
}

/** "revision 2", "revisions 2 and 3", "revisions 1, 2 and 4" (a missing revision reads "none recorded"). */
export function revisionList(revisions: readonly (number | null)[]): string {
  const words = revisions.map((r) => (r === null ? 'none recorded' : String(r)))
  if (words.length <= 1) return `revision ${words[0] ?? DASH}`
  return `revisions ${words.slice(0, -1).join(', ')} and ${words[words.length - 1]}`
}

/** "0.89…1.41" for an index interval (an ellipsis, since either end may carry a minus sign); dash when there is none. */
export function intervalText(i: readonly [number, number] | null | undefined): string {
  return i ? `${index(i[0])}…${index(i[1])}` : DASH
}

/** Why a lot is flagged on the across-lot chart of its means ("" when it is not). */
export function trendFlagNote(l: { beyondLimits: boolean; rules: number[] }): string {
  const parts: string[] = []
  if (l.beyondLimits) parts.push('mean beyond the across-lot limits')
  for (const r of l.rules) if (r !== 1) parts.push(RULE_TEXT[r] ?? `Rule ${r}`)
  return parts.join('; ')
}

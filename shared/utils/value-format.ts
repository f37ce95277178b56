// How every number reads wherever Tercet shows it (pages, certificates, e-mails): a fixed number of decimals per
// quantity, one minus sign (U+2212), digits grouped in threes by a narrow no-break space, and the display unit beside
// it. Values are rounded for display only; CSV files are not formatted here and keep full precision with an ASCII minus.
import { formatQualifier, KNOWN_MEASUREMENTS } from './measurement-names'

export const MINUS = '\u2212'
/** Narrow no-break space (U+202F): groups digits and never lets a number break across lines. */
export const GROUP = '\u202F'
/** Between a number and its unit: a no-break space. */
export const UNIT_SPACE = '\u00A0'
export const DASH = '—'

/** The unit a stored value is shown in, the factor from stored to shown, and its decimals (null: by magnitude). */
export interface DisplayUnit { unit: string; factor: number; decimals: number | null }

// Decimals per quantity: the resolution a bench reading carries and a reader can use.
const BY_UNIT: Record<string, DisplayUnit> = {
  ppm: { unit: 'ppm', factor: 1, decimals: 3 },
  dBm: { unit: 'dBm', factor: 1, decimals: 2 },
  dB: { unit: 'dB', factor: 1, decimals: 2 },
  'dBc/Hz': { unit: 'dBc/Hz', factor: 1, decimals: 1 },
  // jitter is stored in seconds and read in femtoseconds
  s: { unit: 'fs', factor: 1e15, decimals: 1 },
  mA: { unit: 'mA', factor: 1, decimals: 2 },
}

// Frequencies take the prefix their size calls for and keep a resolution of 1 Hz (0.1 Hz below 1 kHz).
const HZ_PREFIXES: readonly DisplayUnit[] = [
  { unit: 'GHz', factor: 1e-9, decimals: 9 },
  { unit: 'MHz', factor: 1e-6, decimals: 6 },
  { unit: 'kHz', factor: 1e-3, decimals: 3 },
]
const HZ: DisplayUnit = { unit: 'Hz', factor: 1, decimals: 1 }

const finite = (v: number | null | undefined): v is number => typeof v === 'number' && Number.isFinite(v)

/**
 * How values of a stored unit are shown. For Hz the prefix follows `magnitude` (a value of the row or series, in Hz),
 * so every number of one row or axis shares it; other units do not depend on it.
 */
export function displayUnitFor(storedUnit: string | null | undefined, magnitude?: number | null): DisplayUnit {
  const unit = storedUnit ?? ''
  if (unit === 'Hz') {
    const m = finite(magnitude) ? Math.abs(Math.round(magnitude)) : 0
    return HZ_PREFIXES.find((p) => m * p.factor >= 1) ?? HZ
  }
  return BY_UNIT[unit] ?? { unit, factor: 1, decimals: null }
}

/** Decimals for a value without a fixed resolution: four significant digits, at most six decimals. */
function decimalsByMagnitude(v: number): number {
  if (v === 0) return 0
  return Math.min(6, Math.max(0, 3 - Math.floor(Math.log10(Math.abs(v)))))
}

// A group of four digits is left whole, as the SI Brochure (9th ed., 5.4.4) makes customary: 1500, but 12 345.
function group(digits: string, fromLeft: boolean): string {
  if (digits.length <= 4) return digits
  return fromLeft ? digits.replace(/(\d{3})(?=\d)/g, `$1${GROUP}`) : digits.replace(/\B(?=(\d{3})+(?!\d))/g, GROUP)
}

/** A number to fixed decimals, grouped in threes both sides of the point (from five digits), with "−" and never "−0.00"; null → dash. */
export function formatFixed(v: number | null | undefined, decimals: number): string {
  if (!finite(v)) return DASH
  const [int, frac] = Math.abs(v).toFixed(decimals).split('.') as [string, string | undefined]
  const zero = /^[0.]*$/.test(`${int}${frac ?? ''}`)
  return (v < 0 && !zero ? MINUS : '') + group(int, false) + (frac ? '.' + group(frac, true) : '')
}

/** A stored value as a number in its display unit, without the unit ("−0.751", "48.3", "375.000 114"). */
export function formatNumber(v: number | null | undefined, display: DisplayUnit): string {
  if (!finite(v)) return DASH
  // 15 significant digits first, so that 1.2345e-13 s reads 123.5 fs and not the 123.4499… the product holds
  const x = Number((v * display.factor).toPrecision(15))
  return formatFixed(x, display.decimals ?? decimalsByMagnitude(x))
}

/** A stored value with its display unit: "−0.751 ppm", "48.3 fs", "375.000 114 MHz", "−101.4 dBc/Hz". */
export function formatQuantity(v: number | null | undefined, storedUnit: string | null | undefined): string {
  if (!finite(v)) return DASH
  const d = displayUnitFor(storedUnit, v)
  return d.unit ? `${formatNumber(v, d)}${UNIT_SPACE}${d.unit}` : formatNumber(v, d)
}

/** A difference with its sign always written: "+0.52", "−1.10", "0.00". */
export function formatSigned(v: number | null | undefined, display: DisplayUnit): string {
  const s = formatNumber(v, display)
  return finite(v) && v > 0 && /[1-9]/.test(s) ? `+${s}` : s
}

/** A capability index (Cp, Cpk, Pp, Ppk) to two decimals. */
export function formatIndex(v: number | null | undefined): string {
  return formatFixed(v, 2)
}

/** A range of two already formatted ends: "−1.63 to −0.93" (a dash between minus signs reads as arithmetic). */
export function formatRange(lo: string, hi: string): string {
  return `${lo} to ${hi}`
}

/** An index interval, "0.89 to 1.41"; dash when there is none. */
export function formatIndexInterval(i: readonly [number, number] | null | undefined): string {
  return i ? formatRange(formatIndex(i[0]), formatIndex(i[1])) : DASH
}

/** A proportion as a percentage: 0.9612 → "96.1 %". */
export function formatPercent(p: number | null | undefined, decimals = 1): string {
  return finite(p) ? `${formatFixed(100 * p, decimals)}${UNIT_SPACE}%` : DASH
}

/** A proportion with its interval: "96.1 % (91.2 to 98.4 %)". */
export function formatYield(y: { p: number; lo: number; hi: number } | null | undefined): string {
  if (!y) return DASH
  return `${formatPercent(y.p)} (${formatRange(formatFixed(100 * y.lo, 1), formatFixed(100 * y.hi, 1))}${UNIT_SPACE}%)`
}

/** Parts per million out of specification: whole numbers from 100, one decimal from 1, three below. */
export function formatDefectPpm(v: number | null | undefined): string {
  if (!finite(v)) return DASH
  if (v === 0) return '0'
  return formatFixed(v, v >= 100 ? 0 : v >= 1 ? 1 : 3)
}

export function formatPValue(p: number | null | undefined): string {
  if (!finite(p)) return DASH
  return p < 0.0001 ? '< 0.0001' : formatFixed(p, 4)
}

/** A count, grouped: 12345 → "12 345". */
export function formatCount(n: number | null | undefined): string {
  return formatFixed(n, 0)
}

/** A size in bytes in the binary unit that reads best: 812 B, 3.4 KiB, 71.1 MiB, 2.0 GiB (IEC 80000-13 prefixes). */
export function formatBytes(n: number | null | undefined): string {
  if (!finite(n)) return DASH
  const units = ['B', 'KiB', 'MiB', 'GiB']
  let i = 0
  let v = n
  while (Math.abs(v) >= 1024 && i < units.length - 1) { v /= 1024; i++ }
  return `${formatFixed(v, i === 0 ? 0 : 1)}\u00A0${units[i]}`
}

/**
 * A bound stated to someone (a resolution, a "within" figure) in its display unit, rounded up to two significant
 * digits so the stated bound never understates it: 0.007 813 dB → "0.0079".
 */
export function formatUpperBound(v: number | null | undefined, display: DisplayUnit): string {
  if (!finite(v) || v <= 0) return DASH
  const step = 10 ** (Math.floor(Math.log10(v * display.factor)) - 1)
  return formatNumber((Math.ceil((v * display.factor) / step) * step) / display.factor, { ...display, decimals: Math.max(0, Math.round(-Math.log10(step))) })
}

/** A wait a person is told about: seconds up to a minute and a half, then whole minutes rounded up. */
export function formatWait(seconds: number): string {
  if (seconds <= 90) return `${Math.max(1, Math.ceil(seconds))} s`
  const minutes = Math.ceil(seconds / 60)
  return `${minutes} minutes`
}

/** "Phase noise @ 10 kHz", "Harmonic rejection @ H2", "Output power": a parameter as every page names it. */
export function parameterLabel(name: string, qualifier?: number | null): string {
  const base = (KNOWN_MEASUREMENTS as Record<string, { label: string }>)[name]?.label ?? name.replace(/_/g, ' ')
  const q = formatQualifier(name, qualifier || null)
  return q ? `${base} @ ${q}` : base
}

/** The unit a value of this stored unit is typed in on a form (jitter in fs; everything else as stored). */
export function inputUnitFor(storedUnit: string | null | undefined): { unit: string; factor: number } {
  return storedUnit === 's' ? { unit: 'fs', factor: 1e15 } : { unit: storedUnit ?? '', factor: 1 }
}

// 15 significant digits: what a double holds exactly, so 40 fs becomes 4e-14 s and not 4.0000000000000004e-14.
const clean = (x: number) => Number(x.toPrecision(15))

/** A typed value (in the input unit) as stored; null stays null. */
export function fromInputUnit(v: number | null, storedUnit: string | null | undefined): number | null {
  if (v === null || !Number.isFinite(v)) return v
  const { factor } = inputUnitFor(storedUnit)
  return factor === 1 ? v : clean(v / factor)
}

/** A stored value in the input unit, for a form field. */
export function toInputUnit(v: number | null, storedUnit: string | null | undefined): number | null {
  if (v === null || !Number.isFinite(v)) return v
  const { factor } = inputUnitFor(storedUnit)
  return factor === 1 ? v : clean(v * factor)
}

/** Decimals a chart axis needs for ticks `step` apart (in display units): 0.25 → 1, 0.02 → 2, 5 → 0. */
export function axisDecimals(step: number | null | undefined, significant = 1): number {
  if (!finite(step) || step <= 0) return 3
  return Math.min(9, Math.max(0, significant - 1 - Math.floor(Math.log10(step))))
}

const QUANTITY_UNITS = new Set([...Object.keys(BY_UNIT), 'Hz'])

/**
 * A figure of an alert or a summary: "52.10 mA", "25.0 fs", "0.012 ppm per unit", "80 %", "20". Stored units read in
 * their display unit (a slope "… per unit" too, to four significant digits); anything else keeps its own unit.
 */
export function formatFigure(value: number | string | null | undefined, unit?: string | null): string {
  if (value === null || value === undefined) return DASH
  if (typeof value === 'string') return unit ? `${value}${UNIT_SPACE}${unit}` : value
  const [base, per] = (unit ?? '').split(/ (?=per )/) as [string, string | undefined]
  if (QUANTITY_UNITS.has(base)) {
    if (!per) return formatQuantity(value, base)
    const d = displayUnitFor(base, value)
    const x = Number((value * d.factor).toPrecision(15))
    return `${formatFixed(x, decimalsByMagnitude(x))}${UNIT_SPACE}${d.unit} ${per}`
  }
  const text = Number.isInteger(value) ? formatCount(value) : formatFixed(value, decimalsByMagnitude(value))
  return unit ? `${text}${UNIT_SPACE}${unit}` : text
}

/** The stored unit of a unit typed on a form: "fs" is stored as seconds, every other unit as typed. */
export function storedUnitFor(typedUnit: string): string {
  return typedUnit === 'fs' ? 's' : typedUnit
}

/** Two-sided limits "−2.000 to 2.000 ppm", one-sided "≥ 7.00 dBm" or "≤ −120.0 dBc/Hz", none "—". */
export function formatLimits(lsl: number | null | undefined, usl: number | null | undefined, storedUnit: string | null | undefined): string {
  const d = displayUnitFor(storedUnit, usl ?? lsl)
  const u = d.unit ? `${UNIT_SPACE}${d.unit}` : ''
  if (finite(lsl) && finite(usl)) return `${formatRange(formatNumber(lsl, d), formatNumber(usl, d))}${u}`
  if (finite(lsl)) return `≥ ${formatNumber(lsl, d)}${u}`
  if (finite(usl)) return `≤ ${formatNumber(usl, d)}${u}`
  return DASH
}

// How a stored measurement reads on screen: label with qualifier, and jitter in femtoseconds.
import { KNOWN_MEASUREMENTS, formatQualifier, isKnownMeasurement } from './measurement-names'

type Shown = { name: string; offsetHz?: number; harmonic?: number; unit: string }

export function measurementLabel(m: Pick<Shown, 'name' | 'offsetHz' | 'harmonic'>): string {
  const base = isKnownMeasurement(m.name) ? KNOWN_MEASUREMENTS[m.name].label : m.name.replace(/_/g, ' ')
  const q = formatQualifier(m.name, m.offsetHz ?? m.harmonic ?? null)
  return q ? `${base} @ ${q}` : base
}

/** Unit and scale a value is displayed in: seconds of jitter as fs, everything else as stored. */
export function displayScale(unit: string): { unit: string; factor: number } {
  return unit === 's' ? { unit: 'fs', factor: 1e15 } : { unit, factor: 1 }
}

/**
 * A number in the display unit: as posted (no float noise), derived jitter to three significant digits; `significant`
 * overrides the digits (derived values such as the mask margin carry more than a reader can use).
 */
export function formatInUnit(value: number | null | undefined, unit: string, significant?: number): string {
  if (value == null || !Number.isFinite(value)) return '—'
  const { factor } = displayScale(unit)
  const v = value * factor
  return String(Number.parseFloat(v.toPrecision(significant ?? (unit === 's' ? 3 : 10))))
}

export type ChipVerdict = 'pass' | 'fail' | 'info' | 'marginal'

/** A pass inside the guard band is still a pass, shown as MARGINAL so the bench looks twice. */
export function chipVerdict(m: { verdict: 'pass' | 'fail' | 'info'; zone: 'inside' | 'guard' | 'outside' | null }): ChipVerdict {
  return m.verdict === 'pass' && m.zone === 'guard' ? 'marginal' : m.verdict
}

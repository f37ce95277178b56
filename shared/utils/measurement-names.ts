export type QualifierKind = 'offsetHz' | 'harmonic'

export interface MeasurementDefinition {
  unit: string
  qualifier: QualifierKind | null
  label: string
  /** Computed by Tercet from other data rather than posted by a station. */
  derived: boolean
}

export const KNOWN_MEASUREMENTS = {
  output_power: { unit: 'dBm', qualifier: null, label: 'Output power', derived: false },
  output_frequency: { unit: 'Hz', qualifier: null, label: 'Output frequency', derived: false },
  frequency_error: { unit: 'ppm', qualifier: null, label: 'Frequency error', derived: false },
  harmonic_rejection: { unit: 'dB', qualifier: 'harmonic', label: 'Harmonic rejection', derived: false },
  phase_noise: { unit: 'dBc/Hz', qualifier: 'offsetHz', label: 'Phase noise', derived: false },
  supply_current: { unit: 'mA', qualifier: null, label: 'Supply current', derived: false },
  integrated_jitter: { unit: 's', qualifier: null, label: 'Integrated jitter', derived: true },
  // limit minus the phase_noise_sweep trace at its worst place under the mask (see phase-noise-mask.ts)
  phase_noise_mask_margin: { unit: 'dB', qualifier: null, label: 'Phase-noise mask margin', derived: true },
} as const satisfies Record<string, MeasurementDefinition>

export type KnownMeasurementName = keyof typeof KNOWN_MEASUREMENTS

export const CUSTOM_NAME_PATTERN = /^[a-z][a-z0-9_]{1,47}$/

export function isKnownMeasurement(name: string): name is KnownMeasurementName {
  return Object.prototype.hasOwnProperty.call(KNOWN_MEASUREMENTS, name)
}

export function isValidMeasurementName(name: string): boolean {
  return CUSTOM_NAME_PATTERN.test(name)
}

/** The unit a known measurement must be posted in; null for station-defined names. */
export function expectedUnit(name: string): string | null {
  return isKnownMeasurement(name) ? KNOWN_MEASUREMENTS[name].unit : null
}

export function qualifierKind(name: string): QualifierKind | null {
  return isKnownMeasurement(name) ? KNOWN_MEASUREMENTS[name].qualifier : null
}

export interface Qualifiers {
  offsetHz?: number | null
  harmonic?: number | null
}

/**
 * The number that tells apart several results of one measurement name in one run
 * (the offset in Hz, or the harmonic number). Names without a qualifier kind, including
 * all station-defined names, have none: null, never 0. A qualified name without its
 * qualifier is an error.
 */
export function qualifierKey(name: string, q: Qualifiers): number | null {
  const kind = qualifierKind(name)
  if (kind === 'offsetHz') {
    const f = q.offsetHz
    if (f == null || !Number.isFinite(f) || f <= 0) throw new RangeError(`${name} needs offsetHz > 0, got ${f}`)
    return f
  }
  if (kind === 'harmonic') {
    const h = q.harmonic
    if (h == null || !Number.isInteger(h) || h < 1) throw new RangeError(`${name} needs an integer harmonic ≥ 1, got ${h}`)
    return h
  }
  return null
}

const FREQUENCY_PREFIXES: readonly (readonly [number, string])[] = [
  [1e9, 'GHz'],
  [1e6, 'MHz'],
  [1e3, 'kHz'],
]

/** 10000 → "10 kHz", 1500 → "1.5 kHz", 0.5 → "0.5 Hz" (six significant digits at most). */
export function formatFrequency(hz: number): string {
  // Rounded before the prefix is chosen so that 999 999.9 Hz reads "1 MHz", not "1000 kHz".
  const rounded = Number.parseFloat(hz.toPrecision(6))
  const [scale, unit] = FREQUENCY_PREFIXES.find(([s]) => Math.abs(rounded) >= s) ?? [1, 'Hz']
  return `${Number.parseFloat((rounded / scale).toPrecision(6))} ${unit}`
}

/** Display form of a stored qualifier: "10 kHz" for offsets, "H2" for harmonics, "" when none. */
export function formatQualifier(name: string, q: number | null): string {
  if (q == null) return ''
  const kind = qualifierKind(name)
  if (kind === 'offsetHz') return formatFrequency(q)
  if (kind === 'harmonic') return `H${q}`
  return ''
}

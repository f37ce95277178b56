// The output of an ideal ×N multiplier is exactly N times its reference: the fractional frequency error passes
// through multiplication unchanged (common practice). An output that disagrees with N × the reference the station
// measured points at the bench (wrong reference, counter not locked), not at the part.
import { ppmError } from './rf'

export interface ReferenceFrequencyCheck {
  referenceHz: number
  multiplier: number
  /** N × the reference frequency. */
  expectedHz: number
  measuredHz: number
  /** (measured − N·f_ref) / (N·f_ref), ppm. */
  offsetPpm: number
  /** Largest disagreement accepted, ppm; null when the specification sets no frequency-error limit. */
  tolerancePpm: number | null
  /** null when there is no tolerance to hold the offset to. */
  agrees: boolean | null
}

/** The largest frequency error the specification allows, ppm: the larger magnitude of its limits; null without one. */
export function frequencyTolerancePpm(limit: { lsl: number | null; usl: number | null } | null | undefined): number | null {
  if (!limit) return null
  const ends = [limit.lsl, limit.usl].filter((x): x is number => x != null && Number.isFinite(x)).map(Math.abs)
  return ends.length ? Math.max(...ends) : null
}

/**
 * Compares a measured output frequency with N × the reference frequency. The offset is accepted up to the
 * specification's frequency-error tolerance, widened by the expanded uncertainty of the frequency reading.
 */
export function referenceFrequencyCheck(
  measuredHz: number, referenceHz: number, multiplier: number, tolerancePpm: number | null, uncertaintyHz: number | null = null,
): ReferenceFrequencyCheck {
  if (!Number.isFinite(referenceHz) || referenceHz <= 0) throw new RangeError(`reference frequency must be > 0, got ${referenceHz}`)
  if (!Number.isFinite(multiplier) || multiplier <= 0) throw new RangeError(`multiplication factor must be > 0, got ${multiplier}`)
  if (tolerancePpm != null && (!Number.isFinite(tolerancePpm) || tolerancePpm < 0)) throw new RangeError(`tolerance must be ≥ 0 ppm, got ${tolerancePpm}`)
  if (uncertaintyHz != null && (!Number.isFinite(uncertaintyHz) || uncertaintyHz < 0)) throw new RangeError(`uncertainty must be ≥ 0 Hz, got ${uncertaintyHz}`)
  const expectedHz = multiplier * referenceHz
  const offsetPpm = ppmError(measuredHz, expectedHz)
  const allowance = tolerancePpm == null ? null : tolerancePpm + ((uncertaintyHz ?? 0) / expectedHz) * 1e6
  return {
    referenceHz, multiplier, expectedHz, measuredHz, offsetPpm, tolerancePpm,
    agrees: allowance == null ? null : Math.abs(offsetPpm) <= allowance,
  }
}

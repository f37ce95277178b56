import { multiplicationPenaltyDb } from './rf'

export interface PhaseNoisePoint {
  offsetHz: number
  /** dBc/Hz */
  value: number
}

export interface MeasuredPhaseNoisePoint extends PhaseNoisePoint {
  /** Expanded uncertainty (k = 2) in dB. */
  uncertainty?: number | null
}

export interface MultiplicationCheckRow {
  offsetHz: number
  measured: number
  /** Reference times N² at this offset; null when the reference does not span the offset. */
  ideal: number | null
  excessDb: number | null
  /** Quieter than an ideal multiplier of the reference allows: a measurement problem, not a good part. */
  implausible: boolean
}

// Keeps an exact match (measured = ideal) from being flagged through rounding of the dB sums.
const ROUNDING_TOLERANCE_DB = 1e-9

function sortReference(points: readonly PhaseNoisePoint[]): PhaseNoisePoint[] {
  for (const p of points) {
    if (!Number.isFinite(p.offsetHz) || p.offsetHz <= 0) throw new RangeError(`reference offset must be > 0, got ${p.offsetHz}`)
    if (!Number.isFinite(p.value)) throw new RangeError(`reference level at ${p.offsetHz} Hz must be finite`)
  }
  const sorted = [...points].sort((a, b) => a.offsetHz - b.offsetHz)
  for (let i = 1; i < sorted.length; i++) {
    if (sorted[i]!.offsetHz === sorted[i - 1]!.offsetHz) throw new RangeError(`duplicate reference offset ${sorted[i]!.offsetHz} Hz`)
  }
  return sorted
}

function interpolateSorted(sorted: readonly PhaseNoisePoint[], offsetHz: number): number | null {
  if (!Number.isFinite(offsetHz) || offsetHz <= 0) return null
  for (let i = 0; i < sorted.length; i++) {
    const p = sorted[i]!
    if (p.offsetHz === offsetHz) return p.value
    const next = sorted[i + 1]
    if (next && p.offsetHz < offsetHz && offsetHz < next.offsetHz) {
      const t = Math.log10(offsetHz / p.offsetHz) / Math.log10(next.offsetHz / p.offsetHz)
      return p.value + t * (next.value - p.value)
    }
  }
  return null
}

/** L at offsetHz, linear in dB against log f between points; null outside the points (no extrapolation). */
export function interpolatePhaseNoise(points: readonly PhaseNoisePoint[], offsetHz: number): number | null {
  return interpolateSorted(sortReference(points), offsetHz)
}

export function multiplicationCheck(
  reference: readonly PhaseNoisePoint[],
  n: number,
  measured: readonly MeasuredPhaseNoisePoint[],
): MultiplicationCheckRow[] {
  const penalty = multiplicationPenaltyDb(n)
  const sorted = sortReference(reference)
  return measured.map((m) => {
    const ref = interpolateSorted(sorted, m.offsetHz)
    if (ref === null || !Number.isFinite(m.value)) {
      return { offsetHz: m.offsetHz, measured: m.value, ideal: ref === null ? null : ref + penalty, excessDb: null, implausible: false }
    }
    const ideal = ref + penalty
    const excessDb = m.value - ideal
    const allowance = m.uncertainty ?? 0
    if (!Number.isFinite(allowance) || allowance < 0) throw new RangeError(`uncertainty must be ≥ 0, got ${allowance}`)
    return { offsetHz: m.offsetHz, measured: m.value, ideal, excessDb, implausible: excessDb < -allowance - ROUNDING_TOLERANCE_DB }
  })
}

// Pure pieces of the phase-noise view: the limit mask a run was judged against, and the log-frequency axis.
import { formatFrequency } from './measurement-names'

export type MaskPoint = { offsetHz: number; usl: number }

type MeasurementLike = { name: string; offsetHz?: number; limit: { usl: number | null } | null }

/**
 * The upper limit per offset as snapshotted on the run's own phase-noise measurements, so a run
 * judged under an older revision shows the mask it was actually held to.
 */
export function limitMaskFromMeasurements(ms: MeasurementLike[]): MaskPoint[] {
  const byOffset = new Map<number, number>()
  for (const m of ms) {
    if (m.name !== 'phase_noise' || m.offsetHz == null || m.limit?.usl == null) continue
    if (!Number.isFinite(m.offsetHz) || m.offsetHz <= 0 || !Number.isFinite(m.limit.usl)) continue
    byOffset.set(m.offsetHz, m.limit.usl)
  }
  return [...byOffset].sort((a, b) => a[0] - b[0]).map(([offsetHz, usl]) => ({ offsetHz, usl }))
}

/** Whole decades covering [lo, hi] in Hz, as exponents: 150 … 2e6 → [2, 7]. */
export function decadeRange(lo: number, hi: number): [number, number] {
  if (!(lo > 0) || !(hi > 0)) throw new RangeError('offsets must be positive')
  const a = Math.floor(Math.log10(Math.min(lo, hi)) + 1e-9)
  const b = Math.ceil(Math.log10(Math.max(lo, hi)) - 1e-9)
  return [a, Math.max(b, a + 1)]
}

/** Axis label of a log10(Hz) position: 4 → "10 kHz"; positions off a round value keep three digits. */
export function logFrequencyLabel(exponent: number): string {
  const hz = 10 ** exponent
  return formatFrequency(Number.parseFloat(hz.toPrecision(3)))
}

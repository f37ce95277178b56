/** One phase-noise point: [offset from the carrier in Hz, L(f) in dBc/Hz]. */
export type PhaseNoisePointTuple = readonly [offsetHz: number, dBcHz: number]

export interface PhaseNoiseIntegral {
  /** One-sided ∫ 10^(L/10) df over [coveredFrom, coveredTo], linear; 10·log10 of it is the integrated noise in dBc. */
  areaLinear: number
  coveredFrom: number
  coveredTo: number
  /** false when the data did not span the whole requested band and only the covered part was integrated. */
  complete: boolean
}

export interface JitterResult extends PhaseNoiseIntegral {
  areaDbc: number
  phaseRad: number
  jitterS: number
}

function sortedPoints(points: readonly PhaseNoisePointTuple[]): PhaseNoisePointTuple[] {
  for (const [f, l] of points) {
    if (!Number.isFinite(f) || f <= 0) throw new RangeError(`phase-noise offset must be a finite number > 0, got ${f}`)
    if (!Number.isFinite(l)) throw new RangeError(`phase-noise level at ${f} Hz must be finite, got ${l}`)
  }
  const sorted = [...points].sort((a, b) => a[0] - b[0])
  for (let i = 1; i < sorted.length; i++) {
    if (sorted[i]![0] === sorted[i - 1]![0]) throw new RangeError(`duplicate phase-noise offset ${sorted[i]![0]} Hz`)
  }
  return sorted
}

/**
 * ∫_a^c S(a)·(f/a)^b df. Written with expm1 so that slopes near b = −1 (−10 dB/decade)
 * do not lose precision and b = −1 itself gives the logarithm S(a)·a·ln(c/a).
 */
function powerLawArea(sA: number, a: number, c: number, b: number): number {
  const lnR = Math.log(c / a)
  const x = (b + 1) * lnR
  return sA * a * (x === 0 ? lnR : (lnR * Math.expm1(x)) / x)
}

/**
 * Integrates L(f) between f1 and f2, taking L linear in log f between points (each segment
 * a power law). The data are never extrapolated: if the band reaches past the first or last
 * point, only the covered part is integrated and `complete` is false. A band that does not
 * overlap the data at all, or fewer than two points, is an error.
 */
export function integratePhaseNoise(
  points: readonly PhaseNoisePointTuple[],
  f1: number,
  f2: number,
): PhaseNoiseIntegral {
  if (!Number.isFinite(f1) || !Number.isFinite(f2) || f1 <= 0 || f2 <= f1) {
    throw new RangeError(`integration band must satisfy 0 < f1 < f2 (finite), got ${f1}..${f2}`)
  }
  const pts = sortedPoints(points)
  if (pts.length < 2) throw new RangeError(`at least 2 phase-noise points are needed, got ${pts.length}`)
  const first = pts[0]![0]
  const last = pts[pts.length - 1]![0]
  const lo = Math.max(f1, first)
  const hi = Math.min(f2, last)
  if (lo >= hi) {
    throw new RangeError(`integration band ${f1}..${f2} Hz does not overlap the phase-noise data (${first}..${last} Hz)`)
  }

  let area = 0
  for (let i = 0; i + 1 < pts.length; i++) {
    const [fa, la] = pts[i]!
    const [fb, lb] = pts[i + 1]!
    if (fb <= lo || fa >= hi) continue
    const slopeDbPerLogF = (lb - la) / Math.log10(fb / fa)
    const b = slopeDbPerLogF / 10
    const a = Math.max(fa, lo)
    const c = Math.min(fb, hi)
    const lAtA = la + slopeDbPerLogF * Math.log10(a / fa)
    area += powerLawArea(10 ** (lAtA / 10), a, c, b)
  }
  return { areaLinear: area, coveredFrom: lo, coveredTo: hi, complete: lo === f1 && hi === f2 }
}

/** RMS phase from the one-sided area of L(f): both sidebands, S_φ = 2·L. */
export function rmsPhaseRad(areaLinear: number): number {
  if (Number.isNaN(areaLinear) || areaLinear < 0) throw new RangeError(`integrated phase noise must be ≥ 0, got ${areaLinear}`)
  return Math.sqrt(2 * areaLinear)
}

export function rmsJitterSeconds(
  points: readonly PhaseNoisePointTuple[],
  f1: number,
  f2: number,
  carrierHz: number,
): JitterResult {
  if (!Number.isFinite(carrierHz) || carrierHz <= 0) throw new RangeError(`carrier frequency must be > 0, got ${carrierHz}`)
  const integral = integratePhaseNoise(points, f1, f2)
  const phaseRad = rmsPhaseRad(integral.areaLinear)
  return {
    ...integral,
    areaDbc: 10 * Math.log10(integral.areaLinear),
    phaseRad,
    jitterS: phaseRad / (2 * Math.PI * carrierHz),
  }
}

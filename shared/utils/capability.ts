// Process capability (Cp/Cpk from within sigma, Pp/Ppk from overall sigma), intervals and expected fallout.

import { chiSquareQuantile, normalCdf, normalQuantile, normalUpperTail } from './distributions'
import { momentsFromValues, stdDev } from './moments'

/** d2 for subgroups of 2: the mean range of two N(0,1) draws is exactly 2/√π = 1.1283792 (tables print 1.128). */
export const D2_N2 = 2 / Math.sqrt(Math.PI)

/** Fewest values for which a sample sigma, and hence an index, exists. */
export const MIN_CAPABILITY_N = 2

export type SpecLimits = { lsl?: number | null; usl?: number | null }

export type CapabilityInput = SpecLimits & {
  mean: number
  sigmaWithin: number | null
  sigmaOverall: number | null
  /** When given and below MIN_CAPABILITY_N, every index is null. */
  n?: number
}

export type CapabilityIndices = {
  cp: number | null
  cpk: number | null
  cpu: number | null
  cpl: number | null
  pp: number | null
  ppk: number | null
  ppu: number | null
  ppl: number | null
}

export type CapabilityBand = 'capable' | 'marginal' | 'not_capable' | 'too_few' | 'unknown'

function usableSigma(sigma: number | null | undefined): sigma is number {
  return typeof sigma === 'number' && Number.isFinite(sigma) && sigma > 0
}

function limit(value: number | null | undefined): number | null {
  return typeof value === 'number' && Number.isFinite(value) ? value : null
}

function indicesFor(mean: number, sigma: number | null, lsl: number | null, usl: number | null) {
  if (!usableSigma(sigma) || !Number.isFinite(mean)) return { whole: null, k: null, upper: null, lower: null }
  const upper = usl === null ? null : (usl - mean) / (3 * sigma)
  const lower = lsl === null ? null : (mean - lsl) / (3 * sigma)
  const whole = usl === null || lsl === null ? null : (usl - lsl) / (6 * sigma)
  const k = upper === null ? lower : lower === null ? upper : Math.min(upper, lower)
  return { whole, k, upper, lower }
}

/**
 * Cp = (USL−LSL)/6σ_w, Cpu = (USL−μ)/3σ_w, Cpl = (μ−LSL)/3σ_w, Cpk = min; Pp family likewise with σ_overall
 * (NIST/SEMATECH e-Handbook §6.1.6; Montgomery, Introduction to SQC, ch. 8). One-sided specs give no Cp/Pp.
 * Throws RangeError when both limits are given and USL ≤ LSL.
 */
export function capabilityIndices(input: CapabilityInput): CapabilityIndices {
  const lsl = limit(input.lsl)
  const usl = limit(input.usl)
  if (lsl !== null && usl !== null && !(usl > lsl)) throw new RangeError('USL must be greater than LSL')
  const tooFew = input.n !== undefined && input.n < MIN_CAPABILITY_N
  const w = indicesFor(input.mean, tooFew ? null : input.sigmaWithin, lsl, usl)
  const o = indicesFor(input.mean, tooFew ? null : input.sigmaOverall, lsl, usl)
  return { cp: w.whole, cpk: w.k, cpu: w.upper, cpl: w.lower, pp: o.whole, ppk: o.k, ppu: o.upper, ppl: o.lower }
}

/** Sum of absolute successive differences |x_i − x_{i−1}| and how many there are (n − 1). */
export function movingRangeSum(valuesInOrder: readonly number[]): { sum: number; count: number } {
  let sum = 0
  for (let i = 1; i < valuesInOrder.length; i++) sum += Math.abs((valuesInOrder[i] as number) - (valuesInOrder[i - 1] as number))
  return { sum, count: Math.max(0, valuesInOrder.length - 1) }
}

/** Within sigma σ̂ = MR̄/d2 with d2 = 2/√π for moving ranges of span 2 (Montgomery ISQC §6.4); NaN without ranges. */
export function sigmaFromMovingRange(mrSum: number, mrCount: number): number {
  return mrCount > 0 ? mrSum / mrCount / D2_N2 : NaN
}

/**
 * Approximate interval for Cpk or Ppk: Ĉ ± z·√(1/(9n) + Ĉ²/(2(n−1))) (Bissell 1990, "How reliable is your capability
 * index?", Applied Statistics 39(3)), derived for σ estimated by the sample standard deviation; null if undefined.
 */
export function bissellInterval(index: number | null, n: number, confidence = 0.95): [number, number] | null {
  if (index === null || !Number.isFinite(index) || !(n >= 2) || !(confidence > 0 && confidence < 1)) return null
  const z = normalQuantile(1 - (1 - confidence) / 2)
  const se = Math.sqrt(1 / (9 * n) + (index * index) / (2 * (n - 1)))
  return [index - z * se, index + z * se]
}

/** The Bissell interval under the name the Cpk column has always used. */
export const bissellCpkInterval = bissellInterval

/**
 * Interval for Cp or Pp: Ĉ·√(χ²(α/2; ν)/ν) ≤ C ≤ Ĉ·√(χ²(1−α/2; ν)/ν), χ²(p; ν) the lower p-quantile (NIST/SEMATECH
 * e-Handbook §6.1.6; Montgomery, Introduction to SQC, ch. 8). Exact under normality when σ is the sample standard
 * deviation and ν = n − 1. Null when the index or ν is unusable.
 */
export function chiSquareInterval(index: number | null, df: number, confidence = 0.95): [number, number] | null {
  if (index === null || !Number.isFinite(index) || !(index > 0) || !(df >= 1) || !(confidence > 0 && confidence < 1)) return null
  const alpha = 1 - confidence
  return [index * Math.sqrt(chiSquareQuantile(alpha / 2, df) / df), index * Math.sqrt(chiSquareQuantile(1 - alpha / 2, df) / df)]
}

export type CapabilityIntervals = {
  cp: [number, number] | null
  cpk: [number, number] | null
  pp: [number, number] | null
  ppk: [number, number] | null
}

/**
 * How each interval is formed, for the legend beside the figures. Pp and Ppk use σ overall, the sample standard
 * deviation, for which the chi-square and Bissell forms were derived. Cp and Cpk use σ within = MR̄/d2, which is less
 * efficient than the sample standard deviation of the same values; no published degrees of freedom for it is applied
 * here, so their intervals are approximate: computed as if σ within were a sample standard deviation with n − 1
 * degrees of freedom, and if anything too narrow.
 */
export const CAPABILITY_INTERVAL_BASIS = {
  cp: { sigma: 'within', method: 'chi-square', approximate: true },
  cpk: { sigma: 'within', method: 'bissell', approximate: true },
  pp: { sigma: 'overall', method: 'chi-square', approximate: false },
  ppk: { sigma: 'overall', method: 'bissell', approximate: true },
} as const

/** Intervals of all four indices from one sample of n values: chi-square on ν = n − 1 for Cp/Pp, Bissell for Cpk/Ppk. */
export function capabilityIntervals(indices: Pick<CapabilityIndices, 'cp' | 'cpk' | 'pp' | 'ppk'>, n: number, confidence = 0.95): CapabilityIntervals {
  return {
    cp: chiSquareInterval(indices.cp, n - 1, confidence),
    cpk: bissellInterval(indices.cpk, n, confidence),
    pp: chiSquareInterval(indices.pp, n - 1, confidence),
    ppk: bissellInterval(indices.ppk, n, confidence),
  }
}

/** Expected fraction outside the limits under N(μ, σ²), in ppm: 10⁶·[Φ((LSL−μ)/σ) + 1 − Φ((USL−μ)/σ)]. */
export function expectedPpmOutOfSpec(mean: number, sigma: number | null, lsl?: number | null, usl?: number | null): number | null {
  const lo = limit(lsl)
  const hi = limit(usl)
  if ((lo === null && hi === null) || !usableSigma(sigma) || !Number.isFinite(mean)) return null
  const below = lo === null ? 0 : normalCdf((lo - mean) / sigma)
  const above = hi === null ? 0 : normalUpperTail((hi - mean) / sigma)
  return 1e6 * (below + above)
}

/** Observed fallout 10⁶·out/n; null for an empty sample. */
export function observedPpm(outCount: number, n: number): number | null {
  return n > 0 ? (1e6 * outCount) / n : null
}

/**
 * Fewer values than this and a Cpk is not banded: at n = 10 its 95 % interval spans roughly ±0.6 around 1.33
 * (Bissell), so a band would claim more than the data show. Thirty is the common-practice floor for a
 * capability study (from memory; stricter customer rules ask for more).
 */
export const MIN_VALUES_FOR_BAND = 30

/** Common-practice bands: Cpk ≥ 1.33 capable, 1.00 ≤ Cpk < 1.33 marginal, below 1.00 not capable. */
export function capabilityBand(cpk: number | null, n = Infinity): CapabilityBand {
  if (cpk === null || !Number.isFinite(cpk)) return 'unknown'
  if (n < MIN_VALUES_FOR_BAND) return 'too_few'
  if (cpk >= 1.33) return 'capable'
  if (cpk >= 1) return 'marginal'
  return 'not_capable'
}

export type CapabilitySummary = CapabilityIndices & {
  n: number
  mean: number | null
  sigmaWithin: number | null
  sigmaOverall: number | null
  cpkInterval: [number, number] | null
  /** 95 % intervals of all four indices (see CAPABILITY_INTERVAL_BASIS for the sigma each assumes). */
  intervals: CapabilityIntervals
  outOfSpecCount: number
  observedPpm: number | null
  /** Normal-model fallout using σ_overall (long-term view, consistent with Ppk). */
  expectedPpm: number | null
  /** Normal-model fallout using σ_within (consistent with Cpk). */
  expectedPpmWithin: number | null
  band: CapabilityBand
}

/**
 * Full recomputation from raw values in test order: σ_within = MR̄/d2, σ_overall = sample s, intervals on every index.
 * A value exactly on a limit counts as in spec.
 */
export function capabilityFromValues(valuesInTestOrder: readonly number[], limits: SpecLimits): CapabilitySummary {
  for (const x of valuesInTestOrder) if (!Number.isFinite(x)) throw new RangeError('capability values must be finite numbers')
  const lsl = limit(limits.lsl)
  const usl = limit(limits.usl)
  const n = valuesInTestOrder.length
  const m = momentsFromValues(valuesInTestOrder)
  const mean = n > 0 ? m.mean : null
  const sigmaOverall = n >= 2 ? stdDev(m) : null
  const mr = movingRangeSum(valuesInTestOrder)
  const sigmaWithin = mr.count > 0 ? sigmaFromMovingRange(mr.sum, mr.count) : null
  let outOfSpecCount = 0
  for (const x of valuesInTestOrder) if ((lsl !== null && x < lsl) || (usl !== null && x > usl)) outOfSpecCount++
  return capabilityFromStats({ n, mean, sigmaWithin, sigmaOverall, outOfSpecCount, lsl, usl })
}

export type CapabilityStats = {
  n: number; mean: number | null; sigmaWithin: number | null; sigmaOverall: number | null; outOfSpecCount: number
} & SpecLimits

/** The same summary from sufficient statistics (n, mean, both sigmas, out-of-spec count), e.g. kept as running aggregates. */
export function capabilityFromStats(stats: CapabilityStats): CapabilitySummary {
  const lsl = limit(stats.lsl)
  const usl = limit(stats.usl)
  const { n, mean, sigmaWithin, sigmaOverall, outOfSpecCount } = stats
  const indices =
    mean === null
      ? capabilityIndices({ mean: NaN, sigmaWithin: null, sigmaOverall: null, lsl, usl })
      : capabilityIndices({ mean, sigmaWithin, sigmaOverall, lsl, usl, n })
  const hasLimits = lsl !== null || usl !== null
  return {
    n,
    mean,
    sigmaWithin,
    sigmaOverall,
    ...indices,
    cpkInterval: bissellInterval(indices.cpk, n),
    intervals: capabilityIntervals(indices, n),
    outOfSpecCount,
    observedPpm: hasLimits ? observedPpm(outOfSpecCount, n) : null,
    expectedPpm: mean === null ? null : expectedPpmOutOfSpec(mean, sigmaOverall, lsl, usl),
    expectedPpmWithin: mean === null ? null : expectedPpmOutOfSpec(mean, sigmaWithin, lsl, usl),
    band: capabilityBand(indices.cpk, n),
  }
}

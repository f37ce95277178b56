// Control charts for individual results: I-MR limits, Western Electric zone rules, EWMA.

import { D2_N2, movingRangeSum } from './capability'
import { momentsFromValues } from './moments'

/** d3 for span 2: sd of the range of two N(0,1) draws, √(2 − 4/π) = 0.8525025 (tables print 0.853). */
export const D3_N2 = Math.sqrt(2 - 4 / Math.PI)
/** E2 = 3/d2 = 2.6587 exactly (tables print 2.66). */
export const E2_N2 = 3 / D2_N2
/** D4 = 1 + 3·d3/d2 = 3.2665 exactly (tables print 3.267). */
export const D4_N2 = 1 + (3 * D3_N2) / D2_N2

export type IndividualsLimits = { n: number; centre: number; mrBar: number; sigma: number; ucl: number; lcl: number; mrUcl: number }

/** Individuals chart: centre x̄, σ̂ = MR̄/d2, limits x̄ ± 3σ̂ = x̄ ± E2·MR̄, MR chart UCL D4·MR̄ (Montgomery ISQC §6.4); null below 2 values. */
export function individualsLimits(baselineValues: readonly number[]): IndividualsLimits | null {
  if (baselineValues.length < 2) return null
  const centre = momentsFromValues(baselineValues).mean
  const mr = movingRangeSum(baselineValues)
  const mrBar = mr.sum / mr.count
  const sigma = mrBar / D2_N2
  return { n: baselineValues.length, centre, mrBar, sigma, ucl: centre + 3 * sigma, lcl: centre - 3 * sigma, mrUcl: D4_N2 * mrBar }
}

export type WesternElectricRule = 1 | 2 | 3 | 4

/**
 * Western Electric zone rules per point (WE Statistical Quality Control Handbook 1956, as restated by NIST §6.3.2):
 * 1: beyond 3σ; 2: 2 of the last 3 beyond 2σ on one side; 3: 4 of the last 5 beyond 1σ on one side;
 * 4: 8 in a row on one side. "Beyond" is strict, a point on the centre line belongs to neither side, and a rule
 * is reported on the point that completes its pattern, which is itself part of the pattern.
 * Near the start of the series the windows hold fewer points; the counts still have to be reached.
 */
export function westernElectricHits(values: readonly number[], centre: number, sigma: number): WesternElectricRule[][] {
  if (!(Number.isFinite(sigma) && sigma > 0)) throw new RangeError('sigma must be a positive finite number')
  const z = values.map((x) => (x - centre) / sigma)
  const side = z.map((v) => (v > 0 ? 1 : v < 0 ? -1 : 0))
  const countBeyond = (end: number, span: number, s: number, k: number): number => {
    let count = 0
    for (let j = Math.max(0, end - span + 1); j <= end; j++) if (s * (z[j] as number) > k) count++
    return count
  }
  return z.map((v, i) => {
    const hits: WesternElectricRule[] = []
    const s = side[i] as number
    if (Math.abs(v) > 3) hits.push(1)
    // Rules 2 and 3 look at the current point's side only, so a +2σ point never pairs with a −2σ point.
    if (Math.abs(v) > 2 && countBeyond(i, 3, s, 2) >= 2) hits.push(2)
    if (Math.abs(v) > 1 && countBeyond(i, 5, s, 1) >= 4) hits.push(3)
    if (s !== 0 && i >= 7) {
      let run = true
      for (let j = i - 7; j < i; j++) if (side[j] !== s) run = false
      if (run) hits.push(4)
    }
    return hits
  })
}

export type EwmaOptions = { lambda?: number; L?: number; mu0: number; sigma: number }
export type EwmaPoint = { index: number; value: number; z: number; ucl: number; lcl: number; signal: boolean }
export type EwmaResult = { lambda: number; L: number; points: EwmaPoint[]; asymptoticUcl: number; asymptoticLcl: number }

/**
 * EWMA zᵢ = λxᵢ + (1−λ)zᵢ₋₁, z₀ = μ0, with exact limits μ0 ± Lσ√(λ/(2−λ)·(1−(1−λ)^{2i}))
 * (Montgomery ISQC §9.2; NIST §6.3.2.4 gives the asymptotic form). A signal is z strictly outside its limits.
 */
export function ewma(values: readonly number[], options: EwmaOptions): EwmaResult {
  const lambda = options.lambda ?? 0.2
  const L = options.L ?? 3
  const { mu0, sigma } = options
  if (!(lambda > 0 && lambda <= 1)) throw new RangeError('lambda must be in (0, 1]')
  if (!(L > 0) || !(sigma > 0) || !Number.isFinite(sigma) || !Number.isFinite(mu0)) throw new RangeError('need L > 0, sigma > 0, finite mu0')
  const asymptoticHalf = L * sigma * Math.sqrt(lambda / (2 - lambda))
  let z = mu0
  let decay = 1
  const points = values.map((value, k) => {
    z = lambda * value + (1 - lambda) * z
    decay *= (1 - lambda) * (1 - lambda)
    const half = asymptoticHalf * Math.sqrt(1 - decay)
    const ucl = mu0 + half
    const lcl = mu0 - half
    return { index: k, value, z, ucl, lcl, signal: z > ucl || z < lcl }
  })
  return { lambda, L, points, asymptoticUcl: mu0 + asymptoticHalf, asymptoticLcl: mu0 - asymptoticHalf }
}

// Ordinary least squares line with slope uncertainty, and drift per 1,000 units tested.

import { studentTQuantile } from './distributions'

export type RegressionResult = {
  n: number
  slope: number
  intercept: number
  /** √(SSE/(n−2)/Sxx); null when n < 3. */
  slopeStdErr: number | null
  /** √(SSE/(n−2)·(1/n + x̄²/Sxx)); null when n < 3. */
  interceptStdErr: number | null
  /** slope ± t(1−α/2, n−2)·slopeStdErr; null when n < 3. */
  slopeInterval: [number, number] | null
  /** 1 − SSE/Syy; null when all y are equal. */
  r2: number | null
}

/** OLS fit y = a + b·x from centred sums, b = Sxy/Sxx (Montgomery & Runger, Applied Statistics, ch. 11); null if n < 2 or x constant. */
export function linearRegression(xs: readonly number[], ys: readonly number[], confidence = 0.95): RegressionResult | null {
  if (xs.length !== ys.length) throw new RangeError('xs and ys must have the same length')
  if (!(confidence > 0 && confidence < 1)) throw new RangeError('confidence must be in (0, 1)')
  const n = xs.length
  if (n < 2) return null
  let sx = 0
  let sy = 0
  for (let i = 0; i < n; i++) {
    sx += xs[i] as number
    sy += ys[i] as number
  }
  const mx = sx / n
  const my = sy / n
  // Two passes: centring before squaring avoids the cancellation of Σx² − (Σx)²/n.
  let sxx = 0
  let sxy = 0
  let syy = 0
  for (let i = 0; i < n; i++) {
    const dx = (xs[i] as number) - mx
    const dy = (ys[i] as number) - my
    sxx += dx * dx
    sxy += dx * dy
    syy += dy * dy
  }
  if (!(sxx > 0)) return null
  const slope = sxy / sxx
  const intercept = my - slope * mx
  let sse = 0
  for (let i = 0; i < n; i++) {
    const r = (ys[i] as number) - intercept - slope * (xs[i] as number)
    sse += r * r
  }
  const r2 = syy > 0 ? 1 - sse / syy : null
  if (n < 3) return { n, slope, intercept, slopeStdErr: null, interceptStdErr: null, slopeInterval: null, r2 }
  const s2 = sse / (n - 2)
  const slopeStdErr = Math.sqrt(s2 / sxx)
  const interceptStdErr = Math.sqrt(s2 * (1 / n + (mx * mx) / sxx))
  const t = studentTQuantile(1 - (1 - confidence) / 2, n - 2)
  return { n, slope, intercept, slopeStdErr, interceptStdErr, slopeInterval: [slope - t * slopeStdErr, slope + t * slopeStdErr], r2 }
}

/**
 * The fewest units a lot's drift is extrapolated from. A slope per 1 000 units read off a handful of units is mostly
 * noise projected far beyond the data; 20 is the least number of points common SPC practice asks for before a chart's
 * limits (and so its trend) are trusted, and by then the t quantile of the slope's interval (18 degrees of freedom,
 * 2.10) is within 8 % of its large-sample value (1.96).
 */
export const MIN_DRIFT_UNITS = 20

/** Drift in test order: regression on x = index/1000, so the slope is the change per 1,000 units tested. */
export function driftPer1000(ysInTestOrder: readonly number[], confidence = 0.95): RegressionResult | null {
  return linearRegression(
    ysInTestOrder.map((_, i) => i / 1000),
    ysInTestOrder,
    confidence,
  )
}

export type CentredSums = {
  n: number
  /** Σ(x − x̄)² and Σ(x − x̄)(y − c) with x̄ the exact mean of x, c any centring constant */
  sxx: number
  sxy: number
  /** Σ(y − c) and Σ(y − c)², to correct for c ≠ ȳ */
  sy: number
  syy: number
}

/** The slope and its interval from sums a database can compute in one pass (same model as linearRegression). */
export function slopeFromCentredSums(s: CentredSums, confidence = 0.95): Pick<RegressionResult, 'n' | 'slope' | 'slopeStdErr' | 'slopeInterval'> | null {
  if (s.n < 2 || !(s.sxx > 0)) return null
  const slope = s.sxy / s.sxx
  if (s.n < 3) return { n: s.n, slope, slopeStdErr: null, slopeInterval: null }
  const syy = s.syy - (s.sy * s.sy) / s.n
  const sse = Math.max(0, syy - slope * s.sxy)
  const slopeStdErr = Math.sqrt(sse / (s.n - 2) / s.sxx)
  const t = studentTQuantile(1 - (1 - confidence) / 2, s.n - 2)
  return { n: s.n, slope, slopeStdErr, slopeInterval: [slope - t * slopeStdErr, slope + t * slopeStdErr] }
}

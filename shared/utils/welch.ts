// Welch's unequal-variance t test on two sample summaries.

import { studentTUpperTail } from './distributions'
import { type Moments, variance } from './moments'

export type SampleSummary = { n: number; mean: number; variance: number }
export type WelchResult = { meanDiff: number; stdErr: number; t: number; df: number; p: number }

/** Sample summary {n, mean, variance} from running moments. */
export function summaryFromMoments(m: Moments): SampleSummary {
  return { n: m.n, mean: m.mean, variance: variance(m) }
}

/**
 * t = (x̄a − x̄b)/√(sa²/na + sb²/nb), df by Welch–Satterthwaite, two-sided p = 2·P(T_df > |t|)
 * (Welch 1947, Biometrika 34; Satterthwaite 1946). Null when either n < 2 or both variances are 0.
 */
export function welchTTest(a: SampleSummary, b: SampleSummary): WelchResult | null {
  if (!(a.n >= 2 && b.n >= 2)) return null
  if (!(a.variance >= 0 && b.variance >= 0) || !Number.isFinite(a.mean) || !Number.isFinite(b.mean)) return null
  const va = a.variance / a.n
  const vb = b.variance / b.n
  const se2 = va + vb
  if (!(se2 > 0) || !Number.isFinite(se2)) return null
  const stdErr = Math.sqrt(se2)
  const meanDiff = a.mean - b.mean
  const t = meanDiff / stdErr
  const df = (se2 * se2) / ((va * va) / (a.n - 1) + (vb * vb) / (b.n - 1))
  const p = Math.min(1, 2 * studentTUpperTail(Math.abs(t), df))
  return { meanDiff, stdErr, t, df, p }
}

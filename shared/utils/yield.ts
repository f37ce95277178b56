// Yield: binomial score interval, rolled throughput yield and failure Pareto.

import { normalQuantile } from './distributions'

export type ProportionInterval = { p: number; lo: number; hi: number }

/**
 * Wilson score interval [p̂ + z²/2n ± z√(p̂(1−p̂)/n + z²/4n²)] / (1 + z²/n) (Wilson 1927, JASA 22; Newcombe 1998).
 * Null for n = 0.
 */
export function wilsonInterval(successes: number, n: number, confidence = 0.95): ProportionInterval | null {
  if (!(confidence > 0 && confidence < 1)) throw new RangeError('confidence must be in (0, 1)')
  if (!Number.isFinite(n) || n < 0 || !Number.isFinite(successes) || successes < 0 || successes > n) {
    throw new RangeError('need 0 ≤ successes ≤ n')
  }
  if (n === 0) return null
  const z = normalQuantile(1 - (1 - confidence) / 2)
  const p = successes / n
  const z2n = (z * z) / n
  const denom = 1 + z2n
  const centre = (p + z2n / 2) / denom
  const half = (z / denom) * Math.sqrt((p * (1 - p)) / n + (z * z) / (4 * n * n))
  // At x = 0 or x = n the bound is exactly 0 or 1; pin it instead of keeping rounding noise.
  const lo = successes === 0 ? 0 : Math.max(0, centre - half)
  const hi = successes === n ? 1 : Math.min(1, centre + half)
  return { p, lo, hi }
}

/** Rolled throughput yield ∏ Yᵢ over sequential steps; 1 for no steps (empty product). */
export function rolledThroughputYield(yields: readonly number[]): number {
  let product = 1
  for (const y of yields) {
    if (!(y >= 0 && y <= 1)) throw new RangeError('each step yield must be in [0, 1]')
    product *= y
  }
  return product
}

export type ParetoRow = { key: string; count: number; percent: number; cumulativePercent: number }

/** Failure counts merged by key, sorted by count (desc, then key), with share and cumulative share in percent. */
export function paretoFailures(items: readonly { key: string; count: number }[]): ParetoRow[] {
  const totals = new Map<string, number>()
  for (const { key, count } of items) {
    if (!(Number.isFinite(count) && count >= 0)) throw new RangeError('failure counts must be non-negative')
    totals.set(key, (totals.get(key) ?? 0) + count)
  }
  const rows = [...totals].sort((a, b) => b[1] - a[1] || (a[0] < b[0] ? -1 : a[0] > b[0] ? 1 : 0))
  const total = rows.reduce((s, [, c]) => s + c, 0)
  let running = 0
  return rows.map(([key, count]) => {
    running += count
    // Cumulative share from the running count, so the last row is exactly 100.
    return { key, count, percent: total > 0 ? (100 * count) / total : 0, cumulativePercent: total > 0 ? (100 * running) / total : 0 }
  })
}

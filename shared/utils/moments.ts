// Mergeable running moments: count, mean, sum of squared deviations (m2), min and max.

export type Moments = { n: number; mean: number; m2: number; min: number; max: number }

/** Moments of an empty sample (identity element of mergeMoments). */
export function emptyMoments(): Moments {
  return { n: 0, mean: 0, m2: 0, min: Infinity, max: -Infinity }
}

/** New moments with x added: Welford's update, m2 += (x − mean_old)(x − mean_new) (Welford 1962; Knuth TAOCP vol. 2 §4.2.2). */
export function addValue(m: Moments, x: number): Moments {
  const n = m.n + 1
  const delta = x - m.mean
  const mean = m.mean + delta / n
  return { n, mean, m2: m.m2 + delta * (x - mean), min: Math.min(m.min, x), max: Math.max(m.max, x) }
}

/** Moments of a list of values, by repeated Welford updates. */
export function momentsFromValues(values: readonly number[]): Moments {
  let m = emptyMoments()
  for (const x of values) m = addValue(m, x)
  return m
}

/** Moments of the union of two samples: m2 = m2a + m2b + δ²·na·nb/n (Chan, Golub & LeVeque 1979). */
export function mergeMoments(a: Moments, b: Moments): Moments {
  if (a.n === 0) return { ...b }
  if (b.n === 0) return { ...a }
  const n = a.n + b.n
  const delta = b.mean - a.mean
  return {
    n,
    mean: a.mean + (delta * b.n) / n,
    m2: a.m2 + b.m2 + (delta * delta * a.n * b.n) / n,
    min: Math.min(a.min, b.min),
    max: Math.max(a.max, b.max),
  }
}

/**
 * Moments from sums of shifted values d = x − shift: mean = shift + Σd/n, m2 = Σd² − (Σd)²/n.
 * Choosing the shift near the mean keeps the subtraction free of cancellation (Chan, Golub & LeVeque 1983, "shifted data").
 */
export function momentsFromShiftedSums(n: number, shift: number, sumD: number, sumSqD: number, min: number, max: number): Moments {
  if (n <= 0) return emptyMoments()
  const m2 = sumSqD - (sumD * sumD) / n
  // Rounding can leave a tiny negative m2 for constant data.
  return { n, mean: shift + sumD / n, m2: m2 > 0 ? m2 : 0, min, max }
}

/** Sample variance m2/(n − 1); NaN when n < 2. */
export function variance(m: Moments): number {
  return m.n < 2 ? NaN : m.m2 / (m.n - 1)
}

/** Sample standard deviation √(m2/(n − 1)); NaN when n < 2. */
export function stdDev(m: Moments): number {
  return Math.sqrt(variance(m))
}

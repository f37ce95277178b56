// Counts of values in bins of width 2^e, kept per lot parameter by the statistics fold, and what the views derive from
// them: display histograms whose bins are unions of fine bins (so each count is exact for its edges) and quantiles
// located in their bin. Dividing a double by a power of two is exact (short of underflow), so the bin of a value is
// the same here and in SQL's FLOOR(value / POW(2, e)).

/** Fine bins over a group's span stay at about this many. */
export const FINE_BINS = 512
/** Bins are no narrower than 2^−50 of the group's largest magnitude, so |k| < 2^51 fits a double and a BIGINT. */
const RELATIVE_BITS = 50
/** 2^MIN_EXPONENT is the smallest normal double; a group of zeros alone gets this exponent. */
export const MIN_EXPONENT = -1022

/** The least whole c with 2^c ≥ x (x > 0), exactly: Math.log2 alone can land one off near a power of two. */
export function ceilLog2(x: number): number {
  let c = Math.ceil(Math.log2(x)) + 0 // never −0
  while (c > -1074 && 2 ** (c - 1) >= x) c--
  while (2 ** c < x) c++
  return c
}

/**
 * The exponent for values spanning [min, max]: e = max(⌈log2(span / 512)⌉, ⌈log2(max |value|)⌉ − 50). It never
 * falls as min falls or max rises, so a group's exponent only grows as its values arrive, and it is a function of
 * the group's extremes alone: the fold and a rebuild from the rows agree on it.
 */
export function binExponent(min: number, max: number): number {
  const maxAbs = Math.max(Math.abs(min), Math.abs(max))
  if (maxAbs === 0) return MIN_EXPONENT
  let e = Math.max(ceilLog2(maxAbs) - RELATIVE_BITS, MIN_EXPONENT)
  // halves before subtracting: max − min of two doubles near ±1.8e308 would overflow
  const span = max / FINE_BINS - min / FINE_BINS
  if (span > 0) e = Math.max(e, ceilLog2(span))
  return e
}

/**
 * The fine bin of a value: ⌊value / 2^e⌋. A negative value too small to be told from 0 at this exponent divides to
 * −0, whose floor would be 0; it belongs to bin −1 (the SQL of the rebuild says the same).
 */
export function binOf(value: number, e: number): number {
  const k = Math.floor(value / 2 ** e)
  // and bin 0 is +0, never −0
  return k === 0 ? (value < 0 ? -1 : 0) : k
}

/** The same arithmetic in SQL for a DOUBLE column and an integer exponent column (or literal). */
export function binSql(value: string, e: string): string {
  return `IF(${value} < 0 AND FLOOR(${value} / POW(2, ${e})) = 0, -1, FLOOR(${value} / POW(2, ${e})))`
}

export type FineBin = { k: number; n: number }

/** Bins at exponent `from` re-counted at `to` ≥ from: ⌊k / 2^(to−from)⌋ is the bin of every value of bin k. */
export function coarsen<T extends { k: number }>(bins: readonly T[], from: number, to: number, add: (into: T, b: T) => void): T[] {
  if (to < from) throw new RangeError('bins only coarsen')
  if (to === from) return bins.map((b) => ({ ...b }))
  const out = new Map<number, T>()
  const scale = 2 ** (to - from)
  for (const b of bins) {
    // k is a whole number below 2^53 and the scale a power of two: the quotient is exact
    const k = Math.floor(b.k / scale)
    const hit = out.get(k)
    if (hit) add(hit, b)
    else out.set(k, { ...b, k })
  }
  return [...out.values()].sort((a, b) => a.k - b.k)
}

export type DisplayHistogram = { edges: number[]; counts: number[] }

/**
 * Display bins over [lo, hi] (which must hold every value) of width m·2^e, m the least whole number giving at most
 * `maxBins` bins, edges on the fine grid: each display bin is the union of m fine bins, so its count is exact for its
 * edges ([left, right), the value at the right edge being in the next bin).
 */
export function displayHistogram(fine: readonly FineBin[], e: number, lo: number, hi: number, maxBins: number): DisplayHistogram {
  if (!(Number.isInteger(maxBins) && maxBins >= 1)) throw new RangeError('maxBins must be a positive integer')
  let bins = fine.filter((b) => b.n > 0)
  let first = Math.min(binOf(lo, e), ...bins.map((b) => b.k))
  let last = Math.max(binOf(hi, e), ...bins.map((b) => b.k))
  // a range of more than 2^40 fine bins (limits far from the values) is first coarsened, exactly, to keep indices exact
  while (last - first > 2 ** 40) {
    bins = coarsen(bins, e, e + 1, (into, b) => { into.n += b.n })
    e += 1
    first = Math.floor(first / 2)
    last = Math.floor(last / 2)
  }
  const m = Math.ceil((last - first + 1) / maxBins)
  const count = Math.ceil((last - first + 1) / m)
  const w = 2 ** e
  const edges = Array.from({ length: count + 1 }, (_, i) => (first + i * m) * w)
  const counts = new Array<number>(count).fill(0)
  for (const b of bins) {
    const i = Math.floor((b.k - first) / m)
    counts[i] = (counts[i] as number) + b.n
  }
  return { edges, counts }
}

/**
 * The type-7 quantile (Hyndman & Fan 1996: h = (n − 1)p, between the order statistics ⌊h⌋ and ⌊h⌋ + 1) of the values
 * counted in fine bins, each order statistic placed by linear interpolation within its bin and the result kept in
 * [min, max], the exact extremes. Each placed order statistic lies in the same bin as the true one, so the result is
 * within one fine width 2^e of the sample quantile.
 */
export function quantileFromBins(fine: readonly FineBin[], e: number, p: number, extremes: { min: number; max: number }): number {
  if (!(p >= 0 && p <= 1)) throw new RangeError('p must be in [0, 1]')
  const bins = fine.filter((b) => b.n > 0).sort((a, b) => a.k - b.k)
  const n = bins.reduce((s, b) => s + b.n, 0)
  if (n === 0) throw new RangeError('quantile of an empty sample')
  const w = 2 ** e
  const clamp = (x: number) => Math.min(extremes.max, Math.max(extremes.min, x))
  // the j-th order statistic (0-based): bins are walked once, and j only grows
  let i = 0
  let before = 0
  const at = (j: number): number => {
    if (j === 0) return extremes.min
    if (j === n - 1) return extremes.max
    while (before + bins[i]!.n <= j) { before += bins[i]!.n; i++ }
    const b = bins[i]!
    return clamp((b.k + (j - before + 0.5) / b.n) * w)
  }
  const h = (n - 1) * p
  const j = Math.floor(h)
  const below = at(j)
  if (j === h) return below
  return below + (h - j) * (at(j + 1) - below)
}

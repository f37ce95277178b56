// Sample quantiles and fixed-width histograms.

/** Quantile of sorted data by linear interpolation at h = (n−1)p, Hyndman & Fan (1996) type 7 (R and NumPy default). */
export function quantileSorted(sorted: readonly number[], p: number): number {
  if (sorted.length === 0) throw new RangeError('quantile of an empty sample')
  if (!(p >= 0 && p <= 1)) throw new RangeError('p must be in [0, 1]')
  const h = (sorted.length - 1) * p
  const lo = Math.floor(h)
  const below = sorted[lo] as number
  if (lo === h) return below
  const above = sorted[lo + 1] as number
  return below + (h - lo) * (above - below)
}

/** Type-7 quantile of unsorted data (sorts a copy). */
export function quantile(values: readonly number[], p: number): number {
  return quantileSorted([...values].sort((a, b) => a - b), p)
}

export type HistogramOptions = { bins: number; min?: number; max?: number }
export type Histogram = { edges: number[]; counts: number[]; underflow: number; overflow: number }

/**
 * Equal-width bins over [min, max] (defaults: data range). Bins are [eᵢ, eᵢ₊₁) except the last, which includes max;
 * values outside the range are counted as underflow/overflow. A zero-width range gives a single bin.
 */
export function histogram(values: readonly number[], options: HistogramOptions): Histogram {
  const bins = options.bins
  if (!(Number.isInteger(bins) && bins >= 1)) throw new RangeError('bins must be a positive integer')
  if (values.some(Number.isNaN)) throw new RangeError('histogram values must not be NaN')
  let lo = options.min
  let hi = options.max
  if (lo === undefined || hi === undefined) {
    let dataMin = Infinity
    let dataMax = -Infinity
    for (const x of values) {
      if (x < dataMin) dataMin = x
      if (x > dataMax) dataMax = x
    }
    lo ??= dataMin
    hi ??= dataMax
  }
  if (values.length === 0 && (!Number.isFinite(lo) || !Number.isFinite(hi))) return { edges: [], counts: [], underflow: 0, overflow: 0 }
  if (!Number.isFinite(lo) || !Number.isFinite(hi) || hi < lo) throw new RangeError('histogram range must be finite with max ≥ min')
  const nBins = hi === lo ? 1 : bins
  const width = (hi - lo) / nBins
  // (hi − lo)·i/n rather than i·width keeps decimal edges such as 0.3 exact where they can be.
  const edges = Array.from({ length: nBins + 1 }, (_, i) => (i === nBins ? hi : lo + ((hi - lo) * i) / nBins))
  const counts = new Array<number>(nBins).fill(0)
  let underflow = 0
  let overflow = 0
  for (const x of values) {
    if (x < lo) underflow++
    else if (x > hi) overflow++
    else {
      let k = width > 0 ? Math.floor((x - lo) / width) : 0
      // The division can land one bin off at an edge; settle against the stored edges.
      if (k >= nBins) k = nBins - 1
      while (k > 0 && x < (edges[k] as number)) k--
      while (k < nBins - 1 && x >= (edges[k + 1] as number)) k++
      counts[k] = (counts[k] as number) + 1
    }
  }
  return { edges, counts, underflow, overflow }
}

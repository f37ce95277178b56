import fc from 'fast-check'
import { quantileSorted as ssQuantileSorted } from 'simple-statistics'
import { describe, expect, it } from 'vitest'
import { binExponent, binOf, ceilLog2, coarsen, displayHistogram, FINE_BINS, quantileFromBins, type FineBin } from '../../../shared/utils/fine-bins'

// any double short of the top 2^−50 of the range, where the last bin's right edge would be beyond the largest double
const finite = fc.double({ min: -1e300, max: 1e300, noNaN: true })
// values a station could send: magnitudes from 1e-18 (jitter in seconds) to 1e10 (frequencies), either sign
const measured = fc.tuple(fc.double({ min: 1, max: 10, noNaN: true }), fc.integer({ min: -18, max: 10 }), fc.boolean()).map(([m, p, neg]) => (neg ? -1 : 1) * m * 10 ** p)
const sample = fc.oneof(
  fc.array(finite, { minLength: 1, maxLength: 200 }),
  fc.array(measured, { minLength: 1, maxLength: 200 }),
  // a tight cluster about a large offset, as an output frequency in Hz
  fc.tuple(fc.double({ min: 1e6, max: 1e10, noNaN: true }), fc.array(fc.double({ min: -1, max: 1, noNaN: true }), { minLength: 1, maxLength: 200 }))
    .map(([c, ds]) => ds.map((d) => c + d * 1e-3)),
)

function binsOf(values: number[], e: number): Map<number, number> {
  const out = new Map<number, number>()
  for (const v of values) { const k = binOf(v, e); out.set(k, (out.get(k) ?? 0) + 1) }
  return out
}
const extremes = (xs: number[]) => ({ min: Math.min(...xs), max: Math.max(...xs) })

describe('ceilLog2', () => {
  it('is the least c with 2^c ≥ x, at powers of two and one step either side', () => {
    for (let c = -1070; c <= 1023; c++) {
      const x = 2 ** c
      expect(ceilLog2(x)).toBe(c)
      // the next double above a power of two needs the next exponent; the one below does not
      if (c > -1022) {
        expect(ceilLog2(x * (1 + Number.EPSILON))).toBe(c + 1)
        expect(ceilLog2(x * (1 - Number.EPSILON / 2))).toBe(c)
      }
    }
  })

  it('brackets any positive double: 2^(c−1) < x ≤ 2^c', () => {
    fc.assert(fc.property(fc.double({ min: Number.MIN_VALUE, noNaN: true, noDefaultInfinity: true }), (x) => {
      const c = ceilLog2(x)
      return 2 ** c >= x && 2 ** (c - 1) < x
    }), { numRuns: 5000 })
  })
})

describe('fine bins', () => {
  it('put every value in [k·2^e, (k+1)·2^e), with |k| < 2^52 and about 512 bins over the span', () => {
    fc.assert(fc.property(sample, (xs) => {
      const { min, max } = extremes(xs)
      const e = binExponent(min, max)
      const w = 2 ** e
      for (const v of xs) {
        const k = binOf(v, e)
        // k·2^e and (k+1)·2^e are exact: a whole number below 2^53 times a power of two
        if (!(k * w <= v && v < (k + 1) * w) || Math.abs(k) >= 2 ** 52) return false
      }
      return binOf(max, e) - binOf(min, e) + 1 <= FINE_BINS + 1
    }), { numRuns: 2000 })
  })

  it('place awkward values: negatives, bin edges, the smallest and largest doubles', () => {
    const awkward = [0, -0, Number.MIN_VALUE, -Number.MIN_VALUE, 2 ** -1022, -(2 ** -1022), Number.MAX_VALUE, -Number.MAX_VALUE, -1, 1, -0.5, 0.1, -0.1, -(2 ** 52), 2 ** 53, -1e-300, 1e300]
    for (const e of [-1074 + 52, -1022, -60, -10, -1, 0, 1, 10, 60, 1016]) {
      for (const v of awkward) {
        const k = binOf(v, e)
        const w = 2 ** e
        if (Number.isFinite(k * w) && Number.isFinite((k + 1) * w) && Math.abs(k) < 2 ** 53) {
          expect(k * w <= v && v < (k + 1) * w, `${v} at e=${e}: k=${k}`).toBe(true)
        }
      }
      // a value on an edge opens its bin; the largest double below it closes the previous one
      for (const k of [-3, -1, 0, 1, 7]) {
        const edge = k * 2 ** e
        expect(binOf(edge, e)).toBe(k)
        const below = edge - 2 ** (e - 52) * Math.max(1, Math.abs(k))
        if (below < edge) expect(binOf(below, e)).toBe(k - 1)
      }
    }
    // a negative value too small to tell from 0 at the exponent still belongs below 0
    expect(binOf(-Number.MIN_VALUE, 1000)).toBe(-1)
    expect(binOf(Number.MIN_VALUE, 1000)).toBe(0)
  })

  it('only grow their exponent as the extremes widen', () => {
    fc.assert(fc.property(finite, finite, finite, finite, (a, b, c, d) => {
      const [min, max] = [Math.min(a, b), Math.max(a, b)]
      return binExponent(Math.min(min, c, d), Math.max(max, c, d)) >= binExponent(min, max)
    }), { numRuns: 5000 })
  })

  it('coarsened from e to e′ equal the values binned at e′ directly', () => {
    fc.assert(fc.property(sample, fc.integer({ min: 0, max: 70 }), (xs, d) => {
      const { min, max } = extremes(xs)
      const e = binExponent(min, max)
      const fine = [...binsOf(xs, e)].map(([k, n]) => ({ k, n }))
      const coarse = coarsen(fine, e, e + d, (into, b) => { into.n += b.n })
      const direct = binsOf(xs, e + d)
      return coarse.length === direct.size && coarse.every((b) => direct.get(b.k) === b.n)
    }), { numRuns: 2000 })
  })
})

describe('display histograms from fine bins', () => {
  it('have edges on the fine grid, at most the bins asked for, and counts exact for their edges', () => {
    fc.assert(fc.property(sample, fc.integer({ min: 1, max: 40 }), fc.double({ min: 0, max: 3, noNaN: true }), (xs, maxBins, widen) => {
      const { min, max } = extremes(xs)
      const e = binExponent(min, max)
      const fine = [...binsOf(xs, e)].map(([k, n]) => ({ k, n }))
      // the view's range reaches out to limits beyond the values
      const span = max - min
      const lo = min - widen * span
      const hi = max + widen * span
      if (!Number.isFinite(lo) || !Number.isFinite(hi)) return true
      const h = displayHistogram(fine, e, lo, hi, maxBins)
      const w = 2 ** e
      if (h.counts.length > maxBins || h.edges.length !== h.counts.length + 1) return false
      if (!(h.edges[0]! <= lo && h.edges.at(-1)! > hi)) return false
      if (!h.edges.every((x) => Number.isInteger(x / w))) return false
      // each count is the number of values in [left, right), counted from the values themselves
      return h.counts.every((c, i) => c === xs.filter((v) => h.edges[i]! <= v && v < h.edges[i + 1]!).length)
        && h.counts.reduce((s, c) => s + c, 0) === xs.length
    }), { numRuns: 1500 })
  })
})

describe('quantiles from fine bins', () => {
  it('lie within one fine width of the sample quantile (type 7, as simple-statistics computes it)', () => {
    fc.assert(fc.property(sample, fc.double({ min: 0, max: 1, noNaN: true }), (xs, p) => {
      const sorted = [...xs].sort((a, b) => a - b)
      const { min, max } = extremes(xs)
      const e = binExponent(min, max)
      const fine: FineBin[] = [...binsOf(xs, e)].map(([k, n]) => ({ k, n }))
      const got = quantileFromBins(fine, e, p, { min, max })
      const exact = ssQuantileSorted(sorted, p)
      if (!Number.isFinite(exact)) return true
      // one fine width, plus the rounding of the two interpolations (a few units in the last place of the values)
      return Math.abs(got - exact) <= 2 ** e + 4 * Number.EPSILON * Math.max(Math.abs(min), Math.abs(max))
    }), { numRuns: 3000 })
  })

  it('give the extremes exactly at p = 0 and 1 and the middle value of an odd sample when all bins are distinct', () => {
    const xs = [-150.25, -148, -147.5, -152, -149.125]
    const e = binExponent(-152, -147.5)
    const fine = [...binsOf(xs, e)].map(([k, n]) => ({ k, n }))
    expect(quantileFromBins(fine, e, 0, { min: -152, max: -147.5 })).toBe(-152)
    expect(quantileFromBins(fine, e, 1, { min: -152, max: -147.5 })).toBe(-147.5)
    // the median is −149.125 (simple-statistics agrees); it is found within its bin of width 2^e
    expect(ssQuantileSorted([...xs].sort((a, b) => a - b), 0.5)).toBe(-149.125)
    expect(Math.abs(quantileFromBins(fine, e, 0.5, { min: -152, max: -147.5 }) - -149.125)).toBeLessThan(2 ** e)
  })
})

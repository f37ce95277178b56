import jStat from 'jstat'
import { describe, expect, it } from 'vitest'
import { momentsFromValues } from '../../../shared/utils/moments'
import { summaryFromMoments, welchTTest } from '../../../shared/utils/welch'
import { mulberry32, normalSample } from '../helpers/prng'

const summary = (xs: number[]) => summaryFromMoments(momentsFromValues(xs))

describe('welchTTest', () => {
  it('reproduces the two worked examples of the Wikipedia article "Welch\'s t-test"', () => {
    // Data and published t, df, p recalled from memory (t 2.46, df 25.0, p 0.021; t 1.57, df 9.9, p 0.149).
    const a1 = [27.5, 21.0, 19.0, 23.6, 17.0, 17.9, 16.9, 20.1, 21.9, 22.6, 23.1, 19.6, 19.0, 21.7, 21.4]
    const b1 = [27.1, 22.0, 20.8, 23.4, 23.4, 23.5, 25.8, 22.0, 24.8, 20.2, 21.9, 22.1, 22.9, 20.5, 24.4]
    const r1 = welchTTest(summary(a1), summary(b1))!
    expect(Math.abs(Math.abs(r1.t) - 2.46)).toBeLessThan(0.005)
    expect(Math.abs(r1.df - 25.0)).toBeLessThan(0.05)
    expect(Math.abs(r1.p - 0.021)).toBeLessThan(0.0005)
    const a2 = [17.2, 20.9, 22.6, 18.1, 21.7, 21.4, 23.5, 24.2, 14.7, 21.8]
    const b2 = [21.5, 22.8, 21.0, 23.0, 21.6, 23.6, 22.5, 20.7, 23.4, 21.8, 20.7, 21.7, 21.5, 22.5, 23.6, 21.5, 22.5, 23.5, 21.5, 21.8]
    const r2 = welchTTest(summary(a2), summary(b2))!
    expect(Math.abs(Math.abs(r2.t) - 1.57)).toBeLessThan(0.005)
    expect(Math.abs(r2.df - 9.9)).toBeLessThan(0.05)
    expect(Math.abs(r2.p - 0.149)).toBeLessThan(0.0005)
  })

  it('p agrees with jstat studentt.cdf on generated samples', () => {
    const rand = mulberry32(271828)
    for (let k = 0; k < 200; k++) {
      const na = 2 + Math.floor(rand() * 60)
      const nb = 2 + Math.floor(rand() * 60)
      const a = summary(normalSample(rand, na, 10, 0.5 + rand() * 2))
      const b = summary(normalSample(rand, nb, 10 + (rand() - 0.5) * 2, 0.5 + rand() * 2))
      const r = welchTTest(a, b)!
      const va = a.variance / a.n
      const vb = b.variance / b.n
      expect(r.t).toBeCloseTo((a.mean - b.mean) / Math.sqrt(va + vb), 12)
      expect(r.df).toBeCloseTo((va + vb) ** 2 / (va ** 2 / (a.n - 1) + vb ** 2 / (b.n - 1)), 9)
      // jstat's t cdf carries errors up to about 2e-8 itself.
      expect(Math.abs(r.p - 2 * (1 - jStat.studentt.cdf(Math.abs(r.t), r.df)))).toBeLessThan(1e-7)
    }
  })

  it('has df = 2(n − 1) for equal sizes and variances, and p = 1 at t = 0', () => {
    const r = welchTTest({ n: 12, mean: 3, variance: 4 }, { n: 12, mean: 3, variance: 4 })!
    expect(r.t).toBe(0)
    expect(r.df).toBeCloseTo(22, 12)
    expect(r.p).toBe(1)
    const sym = welchTTest({ n: 8, mean: 1, variance: 2 }, { n: 20, mean: 0, variance: 5 })!
    const rev = welchTTest({ n: 20, mean: 0, variance: 5 }, { n: 8, mean: 1, variance: 2 })!
    expect(rev.t).toBeCloseTo(-sym.t, 14)
    expect(rev.p).toBeCloseTo(sym.p, 14)
  })

  it('returns null when the test is undefined', () => {
    expect(welchTTest({ n: 1, mean: 0, variance: NaN }, { n: 5, mean: 1, variance: 1 })).toBeNull()
    expect(welchTTest({ n: 5, mean: 0, variance: 0 }, { n: 5, mean: 1, variance: 0 })).toBeNull()
    expect(summaryFromMoments(momentsFromValues([1, 2, 3]))).toEqual({ n: 3, mean: 2, variance: 1 })
  })
})

import jStat from 'jstat'
import { linearRegression as ssLinearRegression, linearRegressionLine, rSquared } from 'simple-statistics'
import { describe, expect, it } from 'vitest'
import { driftPer1000, linearRegression } from '../../../shared/utils/regression'
import { gaussian, mulberry32 } from '../helpers/prng'

const relErr = (a: number, b: number) => Math.abs(a - b) / Math.abs(b)

// NIST StRD linear least squares, "Norris" (https://www.itl.nist.gov/div898/strd/lls/data/Norris.shtml).
// Data transcribed from a public copy; the certified values below confirm it.
const NORRIS_Y = [
  0.1, 338.8, 118.1, 888.0, 9.2, 228.1, 668.5, 998.5, 449.1, 778.9, 559.2, 0.3, 0.1, 778.1, 668.8, 339.3, 448.9, 10.8, 557.7,
  228.3, 998.0, 888.8, 119.6, 0.3, 0.6, 557.6, 339.3, 888.0, 998.5, 778.9, 10.2, 117.6, 228.9, 668.4, 449.2, 0.2,
]
const NORRIS_X = [
  0.2, 337.4, 118.2, 884.6, 10.1, 226.5, 666.3, 996.3, 448.6, 777.0, 558.2, 0.4, 0.6, 775.5, 666.9, 338.0, 447.5, 11.6, 556.0,
  228.1, 995.8, 887.6, 120.2, 0.3, 0.3, 556.8, 339.1, 887.2, 999.0, 779.0, 11.1, 118.3, 229.2, 669.1, 448.9, 0.5,
]

describe('linearRegression', () => {
  it('NIST StRD Norris certified values', () => {
    const r = linearRegression(NORRIS_X, NORRIS_Y)!
    expect(r.n).toBe(36)
    expect(relErr(r.slope, 1.00211681802045)).toBeLessThan(1e-12)
    expect(relErr(r.intercept, -0.262323073774029)).toBeLessThan(1e-10)
    expect(relErr(r.slopeStdErr!, 0.429796848199937e-3)).toBeLessThan(1e-10)
    expect(relErr(r.interceptStdErr!, 0.232818234301152)).toBeLessThan(1e-10)
    expect(relErr(r.r2!, 0.999993745883712)).toBeLessThan(1e-12)
  })

  it('matches simple-statistics slope, intercept and R² on generated data', () => {
    const rand = mulberry32(606)
    const g = gaussian(rand)
    for (const [n, a, b, noise] of [[3, 1, 2, 0.1], [25, -4, 0.03, 1], [500, 1e3, -2.5, 10], [2000, 0, 1e-6, 1e-4]] as const) {
      const xs = Array.from({ length: n }, () => rand() * 100)
      const ys = xs.map((x) => a + b * x + noise * g())
      const r = linearRegression(xs, ys)!
      const pairs = xs.map((x, i) => [x, ys[i] as number])
      const ref = ssLinearRegression(pairs)
      expect(r.slope).toBeCloseTo(ref.m, 9)
      expect(r.intercept).toBeCloseTo(ref.b, 8)
      expect(r.r2!).toBeCloseTo(rSquared(pairs, linearRegressionLine(ref)), 9)
    }
  })

  it('builds the slope interval from the t quantile with n − 2 df (jstat reference)', () => {
    const rand = mulberry32(11)
    const g = gaussian(rand)
    for (const [n, conf] of [[5, 0.95], [12, 0.9], [40, 0.99]] as const) {
      const xs = Array.from({ length: n }, (_, i) => i)
      const ys = xs.map((x) => 3 + 0.5 * x + g())
      const r = linearRegression(xs, ys, conf)!
      const t = jStat.studentt.inv(1 - (1 - conf) / 2, n - 2)
      const [lo, hi] = r.slopeInterval!
      expect(lo).toBeCloseTo(r.slope - t * r.slopeStdErr!, 6)
      expect(hi).toBeCloseTo(r.slope + t * r.slopeStdErr!, 6)
    }
  })

  it('covers the true slope at about the nominal rate (seeded Monte Carlo)', () => {
    const rand = mulberry32(123)
    const g = gaussian(rand)
    const xs = Array.from({ length: 10 }, (_, i) => i)
    let covered = 0
    const trials = 4000
    for (let k = 0; k < trials; k++) {
      const [lo, hi] = linearRegression(xs, xs.map((x) => 2 - 0.7 * x + 0.3 * g()))!.slopeInterval!
      if (lo <= -0.7 && -0.7 <= hi) covered++
    }
    // 95 % nominal; binomial standard error 0.0034.
    expect(Math.abs(covered / trials - 0.95)).toBeLessThan(0.015)
  })

  it('handles degenerate inputs', () => {
    expect(linearRegression([1], [2])).toBeNull()
    expect(linearRegression([2, 2, 2], [1, 2, 3])).toBeNull()
    const two = linearRegression([0, 1], [1, 3])!
    expect(two.slope).toBe(2)
    expect(two.intercept).toBe(1)
    expect(two.slopeStdErr).toBeNull()
    expect(two.slopeInterval).toBeNull()
    const flat = linearRegression([0, 1, 2], [5, 5, 5])!
    expect(flat.slope).toBe(0)
    expect(flat.r2).toBeNull()
    const exact = linearRegression([0, 1, 2, 3], [1, 3, 5, 7])!
    expect(exact.r2).toBe(1)
    expect(exact.slopeStdErr).toBe(0)
    expect(() => linearRegression([1, 2], [1])).toThrow(RangeError)
  })
})

describe('driftPer1000', () => {
  it('reports the slope per 1,000 units in test order', () => {
    // 0.002 per unit is 2 per 1,000 units.
    const ys = Array.from({ length: 500 }, (_, i) => 10 + 0.002 * i)
    const r = driftPer1000(ys)!
    expect(r.slope).toBeCloseTo(2, 10)
    expect(r.intercept).toBeCloseTo(10, 10)
    const viaIndex = linearRegression(ys.map((_, i) => i), ys)!
    expect(r.slope).toBeCloseTo(viaIndex.slope * 1000, 9)
  })

  it('agrees with simple-statistics on noisy data', () => {
    const rand = mulberry32(9001)
    const g = gaussian(rand)
    const ys = Array.from({ length: 3000 }, (_, i) => 5 - 0.0001 * i + 0.05 * g())
    const r = driftPer1000(ys)!
    const ref = ssLinearRegression(ys.map((y, i) => [i / 1000, y]))
    expect(r.slope).toBeCloseTo(ref.m, 10)
    expect(r.slopeInterval![0]).toBeLessThan(r.slope)
    expect(r.slopeInterval![1]).toBeGreaterThan(r.slope)
    expect(driftPer1000([1])).toBeNull()
  })
})

describe('slopeFromCentredSums', () => {
  it('equals the two-pass regression on the same data, whatever the y centring constant', async () => {
    const { mulberry32 } = await import('../helpers/prng')
    const { slopeFromCentredSums, driftPer1000 } = await import('../../../shared/utils/regression')
    const rand = mulberry32(77)
    const ys = Array.from({ length: 400 }, (_, i) => 375e6 + 0.02 * i + 30 * (rand() - 0.5))
    const n = ys.length
    const xbar = (n - 1) / 2 / 1000
    const c = 375e6 + 3
    let sxx = 0, sxy = 0, sy = 0, syy = 0
    ys.forEach((y, i) => { const dx = i / 1000 - xbar; sxx += dx * dx; sxy += dx * (y - c); sy += y - c; syy += (y - c) ** 2 })
    const fromSums = slopeFromCentredSums({ n, sxx, sxy, sy, syy })!
    const direct = driftPer1000(ys)!
    expect(fromSums.slope).toBeCloseTo(direct.slope, 6)
    expect(fromSums.slopeStdErr!).toBeCloseTo(direct.slopeStdErr!, 6)
    expect(fromSums.slopeInterval![0]).toBeCloseTo(direct.slopeInterval![0], 6)
  })
})

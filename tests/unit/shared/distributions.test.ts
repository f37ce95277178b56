import jStat from 'jstat'
import { describe, expect, it } from 'vitest'
import {
  chiSquareCdf,
  chiSquareQuantile,
  chiSquareUpperTail,
  erfc,
  lnGamma,
  normalCdf,
  normalPdf,
  normalQuantile,
  normalUpperTail,
  regularizedBeta,
  regularizedGammaP,
  regularizedGammaQ,
  studentTCdf,
  studentTQuantile,
  studentTUpperTail,
} from '../../../shared/utils/distributions'
import { mulberry32 } from '../helpers/prng'

// Closed forms of the t cdf for integer ν (Abramowitz & Stegun 26.7.3 even ν, 26.7.4 odd ν).
function tCdfClosedForm(t: number, nu: number): number {
  const theta = Math.atan(t / Math.sqrt(nu))
  const c = Math.cos(theta)
  const s = Math.sin(theta)
  if (nu % 2 === 0) {
    let term = 1
    let sum = 1
    for (let k = 1; k <= nu / 2 - 1; k++) {
      term *= (c * c * (2 * k - 1)) / (2 * k)
      sum += term
    }
    return 0.5 * (1 + s * sum)
  }
  let a = (2 * theta) / Math.PI
  if (nu > 1) {
    let term = c
    let sum = c
    for (let k = 1; k <= (nu - 3) / 2; k++) {
      term *= (c * c * (2 * k)) / (2 * k + 1)
      sum += term
    }
    a += (2 / Math.PI) * s * sum
  }
  return 0.5 * (1 + a)
}

describe('normalCdf', () => {
  it('matches standard normal table values', () => {
    // Standard normal table values to 16 digits, from memory; the jstat grid below checks them independently.
    expect(normalCdf(0)).toBe(0.5)
    expect(normalCdf(1)).toBeCloseTo(0.8413447460685429, 15)
    expect(normalCdf(-1)).toBeCloseTo(0.15865525393145707, 15)
    expect(normalCdf(1.96)).toBeCloseTo(0.9750021048517795, 15)
    expect(normalCdf(2)).toBeCloseTo(0.9772498680518208, 15)
  })

  it('reproduces published tail areas in ppm', () => {
    // Keller, Six Sigma Demystified p. 106: a z of 3 leaves 0.00135, i.e. 1 350 DPMO.
    expect(1e6 * normalUpperTail(3)).toBeCloseTo(1350, -0.3)
    // MiC Quality glossary "Sigma level" (1.5σ shift, both tails): 3σ 66 811, 4σ 6 210, 5σ 233, 6σ 3.4 ppm.
    const shiftedPpm = (level: number) => 1e6 * (normalUpperTail(level - 1.5) + normalUpperTail(level + 1.5))
    expect(Math.abs(shiftedPpm(3) - 66811)).toBeLessThan(0.5)
    expect(Math.abs(shiftedPpm(4) - 6210)).toBeLessThan(0.5)
    expect(Math.abs(shiftedPpm(5) - 233)).toBeLessThan(0.5)
    expect(Math.abs(shiftedPpm(6) - 3.4)).toBeLessThan(0.05)
  })

  it('agrees with jstat normal.cdf on a grid from −8 to 8', () => {
    for (let z = -8; z <= 8; z += 0.0137) {
      expect(Math.abs(normalCdf(z) - jStat.normal.cdf(z, 0, 1))).toBeLessThan(1e-14)
    }
  })

  it('keeps relative accuracy far into the upper tail', () => {
    // Upper-tail areas Q(z) to 17 digits, from memory; jstat computes 1 − Φ here and loses them.
    // the table keeps every printed digit, though a double holds about 16 of them
    /* eslint-disable no-loss-of-precision */
    const known: [number, number][] = [
      [4, 3.1671241833119863e-5],
      [6, 9.8658764503769814e-10],
      [8, 6.2209605742717841e-16],
      [10, 7.6198530241605269e-24],
    ]
    /* eslint-enable no-loss-of-precision */
    for (const [z, q] of known) {
      expect(Math.abs(normalUpperTail(z) - q) / q).toBeLessThan(1e-12)
      expect(normalCdf(-z)).toBe(normalUpperTail(z))
    }
    // Asymptotic series φ(z)/z·(1 − 1/z² + 3/z⁴ − 15/z⁶ + 105/z⁸) (A&S 26.2.12); truncation error ≈ 945/z¹⁰.
    for (const z of [20, 25, 30]) {
      const z2 = z * z
      const series = (normalPdf(z) / z) * (1 - 1 / z2 + 3 / z2 ** 2 - 15 / z2 ** 3 + 105 / z2 ** 4)
      expect(Math.abs(normalUpperTail(z) - series) / series).toBeLessThan(2e-10)
    }
  })

  it('agrees with jstat on random arguments (seeded)', () => {
    const rand = mulberry32(20240611)
    for (let i = 0; i < 2000; i++) {
      const z = (rand() - 0.5) * 14
      expect(Math.abs(normalCdf(z) - jStat.normal.cdf(z, 0, 1))).toBeLessThan(1e-14)
    }
  })

  it('handles infinities and NaN', () => {
    expect(normalCdf(Infinity)).toBe(1)
    expect(normalCdf(-Infinity)).toBe(0)
    expect(Number.isNaN(normalCdf(NaN))).toBe(true)
    expect(erfc(0)).toBe(1)
    expect(erfc(-Infinity)).toBe(2)
  })

  it('has the normal density 1/√(2π) at 0', () => {
    expect(normalPdf(0)).toBeCloseTo(1 / Math.sqrt(2 * Math.PI), 15)
    expect(normalPdf(1)).toBeCloseTo(Math.exp(-0.5) / Math.sqrt(2 * Math.PI), 15)
  })
})

describe('normalQuantile', () => {
  it('matches common critical values', () => {
    // Common two-sided critical values, from memory (16 digits); also checked against jstat below.
    expect(normalQuantile(0.975)).toBeCloseTo(1.959963984540054, 13)
    expect(normalQuantile(0.95)).toBeCloseTo(1.6448536269514722, 13)
    expect(normalQuantile(0.995)).toBeCloseTo(2.5758293035489004, 13)
    expect(normalQuantile(0.5)).toBe(0)
  })

  it('inverts normalCdf to 1e-13 relative, tails included', () => {
    for (let p = 1e-15; p < 0.5; p *= 1.7) {
      const x = normalQuantile(p)
      expect(Math.abs(normalCdf(x) - p) / p).toBeLessThan(1e-13)
    }
    // Symmetry only where 1 − p is still close to exact in double precision.
    for (let p = 1e-6; p < 0.5; p *= 1.7) {
      expect(normalQuantile(1 - p)).toBeCloseTo(-normalQuantile(p), 8)
    }
  })

  it('agrees with jstat normal.inv', () => {
    const rand = mulberry32(7)
    for (let i = 0; i < 1000; i++) {
      const p = 1e-6 + rand() * (1 - 2e-6)
      expect(Math.abs(normalQuantile(p) - jStat.normal.inv(p, 0, 1))).toBeLessThan(1e-9)
    }
  })

  it('returns ±Infinity at 0 and 1 and NaN outside', () => {
    expect(normalQuantile(0)).toBe(-Infinity)
    expect(normalQuantile(1)).toBe(Infinity)
    expect(Number.isNaN(normalQuantile(1.5))).toBe(true)
    expect(Number.isNaN(normalQuantile(-0.1))).toBe(true)
  })
})

describe('lnGamma and regularizedBeta', () => {
  it('reproduces factorials and Γ(1/2) = √π', () => {
    let factorial = 1
    for (let n = 1; n <= 20; n++) {
      expect(Math.abs(lnGamma(n + 1) - Math.log((factorial *= n)))).toBeLessThan(1e-12)
    }
    expect(lnGamma(0.5)).toBeCloseTo(Math.log(Math.sqrt(Math.PI)), 14)
    expect(lnGamma(1)).toBeCloseTo(0, 14)
  })

  it('satisfies the closed forms I_x(a,1) = xᵃ and I_x(1,b) = 1 − (1−x)ᵇ', () => {
    for (const x of [0.01, 0.2, 0.5, 0.77, 0.99]) {
      expect(regularizedBeta(x, 3.5, 1)).toBeCloseTo(x ** 3.5, 14)
      expect(regularizedBeta(x, 1, 2.25)).toBeCloseTo(1 - (1 - x) ** 2.25, 14)
      expect(regularizedBeta(x, 1, 1)).toBeCloseTo(x, 14)
    }
  })

  it('equals the binomial tail sum I_p(k, n−k+1) = P(X ≥ k)', () => {
    // Identity between the incomplete beta and the binomial distribution (A&S 26.5.24).
    const binomialTail = (k: number, n: number, p: number) => {
      let sum = 0
      let coef = 1
      for (let j = 0; j <= n; j++) {
        if (j > 0) coef = (coef * (n - j + 1)) / j
        if (j >= k) sum += coef * p ** j * (1 - p) ** (n - j)
      }
      return sum
    }
    for (const [k, n, p] of [[3, 10, 0.2], [12, 150, 0.08], [81, 263, 0.3], [1, 29, 0.05], [40, 45, 0.9]] as const) {
      expect(Math.abs(regularizedBeta(p, k, n - k + 1) - binomialTail(k, n, p))).toBeLessThan(1e-13)
    }
  })

  it('agrees with jstat ibeta', () => {
    // jstat's own error reaches about 2e-8 on these arguments (seen against 40-digit arithmetic), hence the bound.
    const rand = mulberry32(99)
    for (let i = 0; i < 500; i++) {
      const x = rand()
      const a = 0.5 + rand() * 40
      const b = 0.5 + rand() * 40
      expect(Math.abs(regularizedBeta(x, a, b) - jStat.ibeta(x, a, b))).toBeLessThan(5e-8)
    }
  })
})

describe('studentTCdf', () => {
  it('matches the closed forms for integer degrees of freedom to 1e-13', () => {
    for (const nu of [1, 2, 3, 4, 5, 7, 10, 29, 30]) {
      for (let t = -12; t <= 12; t += 0.173) {
        expect(Math.abs(studentTCdf(t, nu) - tCdfClosedForm(t, nu))).toBeLessThan(1e-13)
      }
    }
  })

  it('agrees with jstat studentt.cdf, fractional df included', () => {
    // jstat itself is accurate to about 1e-8 here, hence the looser bound.
    const rand = mulberry32(424242)
    for (let i = 0; i < 1000; i++) {
      const df = 0.5 + rand() * 200
      const t = (rand() - 0.5) * 16
      expect(Math.abs(studentTCdf(t, df) - jStat.studentt.cdf(t, df))).toBeLessThan(1e-7)
    }
  })

  it('is symmetric and tends to the normal for large df', () => {
    expect(studentTCdf(0, 3)).toBe(0.5)
    expect(studentTCdf(1.3, 7) + studentTCdf(-1.3, 7)).toBeCloseTo(1, 14)
    expect(studentTCdf(1.96, Infinity)).toBe(normalCdf(1.96))
    expect(Math.abs(studentTCdf(1.96, 1e6) - normalCdf(1.96))).toBeLessThan(1e-6)
  })

  it('keeps the upper tail accurate where 1 − cdf would lose it', () => {
    // Cauchy (ν = 1) upper tail is 1/2 − atan(t)/π exactly.
    for (const t of [10, 1e3, 1e6]) {
      const exact = Math.atan(1 / t) / Math.PI
      expect(Math.abs(studentTUpperTail(t, 1) - exact) / exact).toBeLessThan(1e-12)
    }
  })
})

describe('studentTQuantile', () => {
  it('matches printed t tables', () => {
    // Standard t table (3 decimals), values from memory.
    expect(studentTQuantile(0.975, 1)).toBeCloseTo(12.706, 3)
    expect(studentTQuantile(0.975, 10)).toBeCloseTo(2.228, 3)
    expect(studentTQuantile(0.975, 30)).toBeCloseTo(2.042, 3)
    expect(studentTQuantile(0.95, 5)).toBeCloseTo(2.015, 3)
    expect(studentTQuantile(0.995, 20)).toBeCloseTo(2.845, 3)
  })

  it('inverts the closed-form cdf', () => {
    for (const nu of [1, 2, 5, 10, 30]) {
      for (const p of [1e-6, 0.001, 0.025, 0.1, 0.4, 0.6, 0.9, 0.975, 0.999]) {
        expect(tCdfClosedForm(studentTQuantile(p, nu), nu)).toBeCloseTo(p, 12)
      }
    }
  })

  it('agrees with jstat studentt.inv', () => {
    for (const df of [1, 2, 3, 4.5, 8, 15, 40, 120, 1000]) {
      for (const p of [0.001, 0.01, 0.025, 0.05, 0.2, 0.5, 0.8, 0.95, 0.975, 0.99, 0.999]) {
        const ref = jStat.studentt.inv(p, df)
        expect(Math.abs(studentTQuantile(p, df) - ref)).toBeLessThan(1e-6 * Math.max(1, Math.abs(ref)))
      }
    }
  })

  it('handles the edges', () => {
    expect(studentTQuantile(0.5, 4)).toBe(0)
    expect(studentTQuantile(0, 4)).toBe(-Infinity)
    expect(studentTQuantile(1, 4)).toBe(Infinity)
    expect(studentTQuantile(0.975, Infinity)).toBe(normalQuantile(0.975))
    expect(Number.isNaN(studentTQuantile(0.5, 0))).toBe(true)
  })
})

describe('chi-square distribution', () => {
  it('matches printed chi-square tables', () => {
    // Lower-tail quantiles as printed in chi-square critical-value tables (e.g. NIST/SEMATECH e-Handbook §1.3.6.7.4),
    // three decimals, values from memory; jstat below checks them to more digits.
    const table: [number, number, number][] = [
      [0.025, 19, 8.907], [0.975, 19, 32.852], [0.95, 1, 3.841], [0.99, 1, 6.635], [0.95, 10, 18.307],
      [0.05, 10, 3.94], [0.025, 30, 16.791], [0.975, 30, 46.979], [0.95, 100, 124.342],
    ]
    for (const [p, k, x] of table) expect(Math.abs(chiSquareQuantile(p, k) - x)).toBeLessThan(0.0005)
  })

  it('inverts the closed forms for one and two degrees of freedom', () => {
    // k = 2: F(x) = 1 − e^(−x/2); k = 1: X = Z², so F(x) = 2Φ(√x) − 1 (A&S 26.4.5).
    for (const p of [1e-8, 0.001, 0.025, 0.3, 0.5, 0.9, 0.975, 0.999, 1 - 1e-9]) {
      expect(chiSquareQuantile(p, 2) / (-2 * Math.log1p(-p))).toBeCloseTo(1, 11)
      // the reference is written with (1 − p)/2, exact for p near 1; near 0 it keeps too few digits, so k = 1 starts at 0.001
      if (p >= 0.001) expect(chiSquareQuantile(p, 1) / normalQuantile((1 - p) / 2) ** 2).toBeCloseTo(1, 9)
    }
  })

  it('agrees with jstat chisquare.cdf and chisquare.inv', () => {
    for (const k of [1, 2, 3, 4.5, 9, 19, 44, 120, 999]) {
      for (const p of [0.001, 0.01, 0.025, 0.05, 0.5, 0.95, 0.975, 0.99, 0.999]) {
        const ref = jStat.chisquare.inv(p, k)
        expect(Math.abs(chiSquareQuantile(p, k) - ref)).toBeLessThan(1e-7 * Math.max(1, ref))
        expect(Math.abs(chiSquareCdf(ref, k) - p)).toBeLessThan(1e-9)
      }
    }
  })

  it('keeps the upper tail accurate far out, and P + Q = 1', () => {
    // k = 2: Q = e^(−x/2) exactly
    expect(chiSquareUpperTail(80, 2) / Math.exp(-40)).toBeCloseTo(1, 12)
    for (const [a, x] of [[0.5, 0.1], [3, 2], [10, 25], [50, 40]] as const) expect(regularizedGammaP(a, x) + regularizedGammaQ(a, x)).toBeCloseTo(1, 14)
  })

  it('handles the edges', () => {
    expect(chiSquareQuantile(0, 5)).toBe(0)
    expect(chiSquareQuantile(1, 5)).toBe(Infinity)
    expect(Number.isNaN(chiSquareQuantile(0.5, 0))).toBe(true)
    expect(Number.isNaN(chiSquareQuantile(1.5, 3))).toBe(true)
    expect(chiSquareCdf(0, 3)).toBe(0)
    expect(chiSquareUpperTail(Infinity, 3)).toBe(0)
  })
})

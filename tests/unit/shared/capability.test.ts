import jStat from 'jstat'
import { mean as ssMean, sampleStandardDeviation } from 'simple-statistics'
import { describe, expect, it } from 'vitest'
import {
  D2_N2,
  CAPABILITY_INTERVAL_BASIS,
  bissellCpkInterval,
  bissellInterval,
  capabilityBand,
  capabilityFromValues,
  capabilityIndices,
  capabilityIntervals,
  chiSquareInterval,
  expectedPpmOutOfSpec,
  movingRangeSum,
  observedPpm,
  sigmaFromMovingRange,
} from '../../../shared/utils/capability'
import { mulberry32, normalSample } from '../helpers/prng'

// Half a unit in the last published digit.
const half = (decimals: number) => 0.5 * 10 ** -decimals

// Montgomery ISQC piston-ring inside diameters (R package qcc `pistonrings`), subgroups 1–25 of 5.
const PISTON_PHASE1 = [
  [74.03, 74.002, 74.019, 73.992, 74.008], [73.995, 73.992, 74.001, 74.011, 74.004], [73.988, 74.024, 74.021, 74.005, 74.002],
  [74.002, 73.996, 73.993, 74.015, 74.009], [73.992, 74.007, 74.015, 73.989, 74.014], [74.009, 73.994, 73.997, 73.985, 73.993],
  [73.995, 74.006, 73.994, 74.0, 74.005], [73.985, 74.003, 73.993, 74.015, 73.988], [74.008, 73.995, 74.009, 74.005, 74.004],
  [73.998, 74.0, 73.99, 74.007, 73.995], [73.994, 73.998, 73.994, 73.995, 73.99], [74.004, 74.0, 74.007, 74.0, 73.996],
  [73.983, 74.002, 73.998, 73.997, 74.012], [74.006, 73.967, 73.994, 74.0, 73.984], [74.012, 74.014, 73.998, 73.999, 74.007],
  [74.0, 73.984, 74.005, 73.998, 73.996], [73.994, 74.012, 73.986, 74.005, 74.007], [74.006, 74.01, 74.018, 74.003, 74.0],
  [73.984, 74.002, 74.003, 74.005, 73.997], [74.0, 74.01, 74.013, 74.02, 74.003], [73.988, 74.001, 74.009, 74.005, 73.996],
  [74.004, 73.999, 73.99, 74.006, 74.009], [74.01, 73.989, 73.99, 74.009, 74.014], [74.015, 74.008, 73.993, 74.0, 74.01],
  [73.982, 73.984, 73.995, 74.017, 74.013],
]

const NIST_FLOW_RATE = [49.6, 47.6, 49.9, 51.3, 47.8, 51.2, 52.6, 52.4, 53.6, 52.1]

describe('capabilityIndices', () => {
  it('NIST/SEMATECH §6.1.6 example: USL 20, LSL 8, mean 16, s 2', () => {
    // Published: Cp = 1.0, k = 0.3333, Cpk = 0.6667 (Cpu 0.6667, Cpl 1.3333).
    const r = capabilityIndices({ mean: 16, sigmaWithin: 2, sigmaOverall: 2, lsl: 8, usl: 20 })
    expect(r.cp).toBeCloseTo(1.0, 4)
    expect(Math.abs((r.cpk as number) - 0.6667)).toBeLessThan(half(4))
    expect(Math.abs((r.cpu as number) - 0.6667)).toBeLessThan(half(4))
    expect(Math.abs((r.cpl as number) - 1.3333)).toBeLessThan(half(4))
    // Cpk = Cp(1 − k) with k = |m − μ|/((USL − LSL)/2) = 0.3333.
    expect(r.cpk).toBeCloseTo((r.cp as number) * (1 - 2 / 6), 12)
    // The same numbers with s taken as the overall sigma.
    expect(r.pp).toBeCloseTo(1.0, 4)
    expect(Math.abs((r.ppk as number) - 0.6667)).toBeLessThan(half(4))
    expect(Math.abs((r.ppl as number) - 1.3333)).toBeLessThan(half(4))
  })

  it('Montgomery ISQC exercise: USL 100, LSL 90, mean 97, s 1.6 gives Cpk 0.6250', () => {
    // Inputs as published; no answer is printed. Cpk = Cpu = (100 − 97)/(3·1.6) = 0.625.
    const r = capabilityIndices({ mean: 97, sigmaWithin: 1.6, sigmaOverall: 1.6, lsl: 90, usl: 100 })
    expect(r.cpk).toBeCloseTo(0.625, 10)
  })

  it('piston rings: Cp 1.703 and Cpk 1.663 from R̄/d2 with spec 74.000 ± 0.05', () => {
    // Published qcc phase-I values x̿ = 74.00118 and R̄ = 0.02276 confirm the typed-in data first.
    const means = PISTON_PHASE1.map((g) => ssMean(g))
    const ranges = PISTON_PHASE1.map((g) => Math.max(...g) - Math.min(...g))
    const grandMean = ssMean(means)
    const rBar = ssMean(ranges)
    expect(Math.abs(grandMean - 74.00118)).toBeLessThan(half(5))
    expect(Math.abs(rBar - 0.02276)).toBeLessThan(half(5))
    // d2 = 2.326 for subgroups of 5 (control-chart constant tables).
    const r = capabilityIndices({ mean: grandMean, sigmaWithin: rBar / 2.326, sigmaOverall: null, lsl: 73.95, usl: 74.05 })
    expect(Math.abs((r.cp as number) - 1.703)).toBeLessThan(half(3))
    expect(Math.abs((r.cpk as number) - 1.663)).toBeLessThan(half(3))
    expect(r.pp).toBeNull()
    expect(r.ppk).toBeNull()
  })

  it('one-sided specifications have no Cp/Pp and Cpk is the existing side', () => {
    const upperOnly = capabilityIndices({ mean: 16, sigmaWithin: 2, sigmaOverall: 2.5, usl: 20 })
    expect(upperOnly.cp).toBeNull()
    expect(upperOnly.pp).toBeNull()
    expect(upperOnly.cpl).toBeNull()
    expect(upperOnly.cpk).toBeCloseTo(4 / 6, 12)
    expect(upperOnly.ppk).toBeCloseTo(4 / 7.5, 12)
    const lowerOnly = capabilityIndices({ mean: 16, sigmaWithin: 2, sigmaOverall: 2, lsl: 8, usl: null })
    expect(lowerOnly.cpu).toBeNull()
    expect(lowerOnly.cpk).toBeCloseTo(8 / 6, 12)
    const none = capabilityIndices({ mean: 16, sigmaWithin: 2, sigmaOverall: 2 })
    expect(Object.values(none).every((v) => v === null)).toBe(true)
  })

  it('gives null indices for zero, non-finite or missing sigma and for n < 2', () => {
    for (const bad of [0, NaN, Infinity, -1, null]) {
      const r = capabilityIndices({ mean: 16, sigmaWithin: bad, sigmaOverall: 2, lsl: 8, usl: 20 })
      expect(r.cp).toBeNull()
      expect(r.cpk).toBeNull()
      expect(r.pp).toBeCloseTo(1, 12)
    }
    const tiny = capabilityIndices({ mean: 16, sigmaWithin: 2, sigmaOverall: 2, lsl: 8, usl: 20, n: 1 })
    expect(Object.values(tiny).every((v) => v === null)).toBe(true)
    expect(() => capabilityIndices({ mean: 0, sigmaWithin: 1, sigmaOverall: 1, lsl: 5, usl: 5 })).toThrow(RangeError)
  })
})

describe('moving-range sigma', () => {
  it('uses d2 = 2/√π; printed tables round it to 1.128', () => {
    // The range of two N(0,1) draws is |N(0,2)|, whose mean is 2/√π = 1.1283792; tables print 1.128.
    expect(D2_N2).toBeCloseTo(1.1283792, 7)
    expect(Math.abs(D2_N2 - 1.128)).toBeLessThan(half(3))
  })

  it('NIST §6.3.2.2 flow rate: MR̄ = 1.8778', () => {
    const mr = movingRangeSum(NIST_FLOW_RATE)
    expect(mr.count).toBe(9)
    expect(Math.abs(mr.sum / mr.count - 1.8778)).toBeLessThan(half(4))
    // NIST divides by the table d2 = 1.128; the exact d2 differs by 3.4e-4 relative.
    const sigma = sigmaFromMovingRange(mr.sum, mr.count)
    expect(sigma).toBeCloseTo(mr.sum / mr.count / (2 / Math.sqrt(Math.PI)), 14)
    expect(Math.abs(sigma / (1.8778 / 1.128) - 1)).toBeLessThan(4e-4)
  })

  it('handles short series', () => {
    expect(movingRangeSum([])).toEqual({ sum: 0, count: 0 })
    expect(movingRangeSum([5])).toEqual({ sum: 0, count: 0 })
    expect(Number.isNaN(sigmaFromMovingRange(0, 0))).toBe(true)
  })
})

describe('bissellCpkInterval', () => {
  it('Quality Digest, May 2000, "The Last Word": Cpk 1.15, n 45 → 0.89 to 1.41', () => {
    const [lo, hi] = bissellCpkInterval(1.15, 45) as [number, number]
    expect(Math.abs(lo - 0.89)).toBeLessThan(half(2))
    expect(Math.abs(hi - 1.41)).toBeLessThan(half(2))
    // Unrounded, 0.8907 – 1.4093 (independent recomputation of the same example).
    expect(Math.abs(lo - 0.8907)).toBeLessThan(half(4))
    expect(Math.abs(hi - 1.4093)).toBeLessThan(half(4))
  })

  it('Montgomery ISQC exercise (n 30, Cpk 0.625): 0.4248 – 0.8252', () => {
    // The exercise prints no answer; 0.4248 – 0.8252 is an independent recomputation with jstat's normal quantile.
    const [lo, hi] = bissellCpkInterval(0.625, 30) as [number, number]
    expect(Math.abs(lo - 0.4248)).toBeLessThan(half(4))
    expect(Math.abs(hi - 0.8252)).toBeLessThan(half(4))
  })

  it('widens with confidence and returns null when undefined', () => {
    const i90 = bissellCpkInterval(1.33, 50, 0.9) as [number, number]
    const i99 = bissellCpkInterval(1.33, 50, 0.99) as [number, number]
    expect(i99[1] - i99[0]).toBeGreaterThan(i90[1] - i90[0])
    // z(0.95) = 1.6449 against z(0.995) = 2.5758: width ratio is the z ratio.
    expect((i99[1] - i99[0]) / (i90[1] - i90[0])).toBeCloseTo(2.5758293035489 / 1.6448536269514722, 10)
    expect(bissellCpkInterval(null, 50)).toBeNull()
    expect(bissellCpkInterval(1.2, 1)).toBeNull()
    expect(bissellCpkInterval(1.2, 50, 1)).toBeNull()
  })
})

describe('chiSquareInterval (Cp, Pp)', () => {
  it('Montgomery ISQC, n 20, Cp 1.33, 95 %: 0.91 to 1.75 (published values from memory)', () => {
    const [lo, hi] = chiSquareInterval(1.33, 19) as [number, number]
    expect(Math.abs(lo - 0.91)).toBeLessThan(half(2))
    expect(Math.abs(hi - 1.75)).toBeLessThan(half(2))
    // Unrounded, with χ²(0.025; 19) = 8.907 and χ²(0.975; 19) = 32.852 from chi-square tables: 0.9106 – 1.7489.
    expect(Math.abs(lo - 0.9106)).toBeLessThan(half(4))
    expect(Math.abs(hi - 1.7489)).toBeLessThan(half(4))
  })

  it('is the formula of SAS/QC PROC CAPABILITY with jstat chi-square quantiles, at any confidence', () => {
    // Ĉ·√(χ²(α/2; ν)/ν) … Ĉ·√(χ²(1−α/2; ν)/ν), ν = n − 1 (NIST/SEMATECH e-Handbook §6.1.6; SAS/QC PROC CAPABILITY)
    for (const [cp, n, conf] of [[1, 10, 0.95], [1.67, 125, 0.9], [0.8, 31, 0.99], [2.4, 3, 0.95]] as const) {
      const alpha = 1 - conf
      const [lo, hi] = chiSquareInterval(cp, n - 1, conf) as [number, number]
      expect(lo).toBeCloseTo(cp * Math.sqrt(jStat.chisquare.inv(alpha / 2, n - 1) / (n - 1)), 9)
      expect(hi).toBeCloseTo(cp * Math.sqrt(jStat.chisquare.inv(1 - alpha / 2, n - 1) / (n - 1)), 9)
    }
  })

  it('returns null when the index or the degrees of freedom are unusable', () => {
    expect(chiSquareInterval(null, 19)).toBeNull()
    expect(chiSquareInterval(NaN, 19)).toBeNull()
    expect(chiSquareInterval(1.33, 0)).toBeNull()
    expect(chiSquareInterval(1.33, 19, 1)).toBeNull()
  })
})

describe('capabilityIntervals', () => {
  it('gives Pp by chi-square and Ppk by Bissell with the sample standard deviation and n − 1', () => {
    // NIST §6.1.6 example (USL 20, LSL 8, mean 16, s 2) taken as a sample of n = 45: Pp = 1.0, Ppk = 0.6667.
    const ix = capabilityIndices({ mean: 16, sigmaWithin: 2.2, sigmaOverall: 2, lsl: 8, usl: 20 })
    const r = capabilityIntervals(ix, 45)
    expect(r.pp![0]).toBeCloseTo(Math.sqrt(jStat.chisquare.inv(0.025, 44) / 44), 9)
    expect(r.pp![1]).toBeCloseTo(Math.sqrt(jStat.chisquare.inv(0.975, 44) / 44), 9)
    const z = jStat.normal.inv(0.975, 0, 1)
    const se = Math.sqrt(1 / (9 * 45) + (2 / 3) ** 2 / (2 * 44))
    expect(r.ppk![0]).toBeCloseTo(2 / 3 - z * se, 9)
    expect(r.ppk![1]).toBeCloseTo(2 / 3 + z * se, 9)
  })

  it('forms the Cp and Cpk intervals the same way on σ within, marked approximate', () => {
    // Quality Digest, May 2000: Cpk 1.15, n 45 → 0.89 to 1.41, whatever sigma the index came from.
    const ix = { cp: 1.5, cpk: 1.15, pp: null, ppk: null }
    const r = capabilityIntervals(ix, 45)
    expect(Math.abs(r.cpk![0] - 0.89)).toBeLessThan(half(2))
    expect(Math.abs(r.cpk![1] - 1.41)).toBeLessThan(half(2))
    expect(r.cp).toEqual(chiSquareInterval(1.5, 44))
    expect(r.pp).toBeNull()
    expect(r.ppk).toBeNull()
    expect(CAPABILITY_INTERVAL_BASIS.cp).toMatchObject({ sigma: 'within', approximate: true })
    expect(CAPABILITY_INTERVAL_BASIS.cpk).toMatchObject({ sigma: 'within', approximate: true })
    expect(CAPABILITY_INTERVAL_BASIS.pp).toMatchObject({ sigma: 'overall', method: 'chi-square', approximate: false })
    expect(CAPABILITY_INTERVAL_BASIS.ppk).toMatchObject({ sigma: 'overall', method: 'bissell' })
  })

  it('widens as n falls: 1.0509 – 1.6091 at n 50 against a wider one at n 20 for Cpk 1.33', () => {
    // 1.0509 – 1.6091: independent recomputation of the Bissell form with jstat (not a published value)
    const at50 = bissellInterval(1.33, 50) as [number, number]
    expect(Math.abs(at50[0] - 1.0509)).toBeLessThan(half(4))
    expect(Math.abs(at50[1] - 1.6091)).toBeLessThan(half(4))
    const at20 = bissellInterval(1.33, 20) as [number, number]
    expect(at20[1] - at20[0]).toBeGreaterThan(at50[1] - at50[0])
  })
})

describe('expected and observed ppm', () => {
  it('matches published sigma-level fallout (1.5σ shift)', () => {
    // MiC Quality glossary "Sigma level": 6σ → 3.4 ppm, 3σ → 66 811 ppm with both tails and a 1.5σ shift.
    expect(Math.abs((expectedPpmOutOfSpec(1.5, 1, -6, 6) as number) - 3.4)).toBeLessThan(0.05)
    expect(Math.abs((expectedPpmOutOfSpec(1.5, 1, -3, 3) as number) - 66811)).toBeLessThan(0.5)
    // Keller, Six Sigma Demystified p. 106: one-sided z = 3 gives 1 350 DPMO.
    expect(Math.abs((expectedPpmOutOfSpec(0, 1, null, 3) as number) - 1350)).toBeLessThan(0.5)
  })

  it('agrees with jstat normal.cdf on generated cases', () => {
    const rand = mulberry32(5150)
    for (let i = 0; i < 200; i++) {
      const mean = (rand() - 0.5) * 10
      const sigma = 0.1 + rand() * 3
      const lsl = -5 - rand() * 5
      const usl = 5 + rand() * 5
      const ref = 1e6 * (jStat.normal.cdf(lsl, mean, sigma) + 1 - jStat.normal.cdf(usl, mean, sigma))
      expect(Math.abs((expectedPpmOutOfSpec(mean, sigma, lsl, usl) as number) - ref)).toBeLessThan(1e-7)
      const oneSided = 1e6 * (1 - jStat.normal.cdf(usl, mean, sigma))
      expect(Math.abs((expectedPpmOutOfSpec(mean, sigma, null, usl) as number) - oneSided)).toBeLessThan(1e-7)
    }
  })

  it('returns null without limits or a usable sigma; observedPpm is 10⁶·out/n', () => {
    expect(expectedPpmOutOfSpec(0, 1, null, null)).toBeNull()
    expect(expectedPpmOutOfSpec(0, 0, -1, 1)).toBeNull()
    expect(observedPpm(3, 1000)).toBe(3000)
    expect(observedPpm(0, 0)).toBeNull()
  })
})

describe('capabilityBand', () => {
  it('uses the common-practice thresholds 1.33 and 1.00', () => {
    // Minimum Cp 1.33 for existing processes (SAS/QC PROC CAPABILITY, citing Montgomery 1996).
    expect(capabilityBand(1.33)).toBe('capable')
    expect(capabilityBand(2)).toBe('capable')
    expect(capabilityBand(1.3299)).toBe('marginal')
    expect(capabilityBand(1)).toBe('marginal')
    expect(capabilityBand(0.9999)).toBe('not_capable')
    expect(capabilityBand(-0.5)).toBe('not_capable')
    expect(capabilityBand(null)).toBe('unknown')
    expect(capabilityBand(NaN)).toBe('unknown')
  })

  it('does not band an index taken from fewer than thirty values', () => {
    // 30 values: the common-practice floor for a capability study (from memory)
    expect(capabilityBand(2, 29)).toBe('too_few')
    expect(capabilityBand(2, 30)).toBe('capable')
    expect(capabilityBand(0.5, 3)).toBe('too_few')
    expect(capabilityBand(null, 3)).toBe('unknown')
  })
})

describe('capabilityFromValues', () => {
  it('recomputes everything from raw values (simple-statistics and jstat references)', () => {
    const rand = mulberry32(31337)
    const xs = normalSample(rand, 400, 10.02, 0.05)
    const lsl = 9.85
    const usl = 10.15
    const r = capabilityFromValues(xs, { lsl, usl })
    const mean = ssMean(xs)
    const s = sampleStandardDeviation(xs)
    const mrBar = ssMean(xs.slice(1).map((x, i) => Math.abs(x - (xs[i] as number))))
    const sw = mrBar / (2 / Math.sqrt(Math.PI))
    expect(r.n).toBe(400)
    expect(r.mean as number).toBeCloseTo(mean, 12)
    expect(r.sigmaOverall as number).toBeCloseTo(s, 12)
    expect(r.sigmaWithin as number).toBeCloseTo(sw, 12)
    expect(r.cp as number).toBeCloseTo((usl - lsl) / (6 * sw), 10)
    expect(r.cpk as number).toBeCloseTo(Math.min(usl - mean, mean - lsl) / (3 * sw), 10)
    expect(r.ppk as number).toBeCloseTo(Math.min(usl - mean, mean - lsl) / (3 * s), 10)
    const z = jStat.normal.inv(0.975, 0, 1)
    const se = Math.sqrt(1 / (9 * 400) + (r.cpk as number) ** 2 / (2 * 399))
    expect((r.cpkInterval as [number, number])[0]).toBeCloseTo((r.cpk as number) - z * se, 8)
    expect((r.cpkInterval as [number, number])[1]).toBeCloseTo((r.cpk as number) + z * se, 8)
    const out = xs.filter((x) => x < lsl || x > usl).length
    expect(r.outOfSpecCount).toBe(out)
    expect(r.observedPpm).toBe((1e6 * out) / 400)
    const expOverall = 1e6 * (jStat.normal.cdf(lsl, mean, s) + 1 - jStat.normal.cdf(usl, mean, s))
    const expWithin = 1e6 * (jStat.normal.cdf(lsl, mean, sw) + 1 - jStat.normal.cdf(usl, mean, sw))
    expect(Math.abs((r.expectedPpm as number) - expOverall)).toBeLessThan(1e-6)
    expect(Math.abs((r.expectedPpmWithin as number) - expWithin)).toBeLessThan(1e-6)
    expect(r.band).toBe(capabilityBand(r.cpk))
  })

  it('counts values exactly on a limit as in spec', () => {
    const r = capabilityFromValues([1, 2, 3, 4, 5], { lsl: 1, usl: 4 })
    expect(r.outOfSpecCount).toBe(1)
    expect(r.observedPpm).toBe(200000)
  })

  it('degrades to nulls for tiny samples and no limits', () => {
    const empty = capabilityFromValues([], { lsl: 0, usl: 1 })
    expect(empty.n).toBe(0)
    expect(empty.mean).toBeNull()
    expect(empty.cpk).toBeNull()
    expect(empty.observedPpm).toBeNull()
    expect(empty.band).toBe('unknown')
    const one = capabilityFromValues([0.5], { lsl: 0, usl: 1 })
    expect(one.mean).toBe(0.5)
    expect(one.sigmaOverall).toBeNull()
    expect(one.cpk).toBeNull()
    expect(one.cpkInterval).toBeNull()
    expect(one.observedPpm).toBe(0)
    const noLimits = capabilityFromValues([1, 2, 3], {})
    expect(noLimits.sigmaOverall).toBeCloseTo(1, 14)
    expect(noLimits.cpk).toBeNull()
    expect(noLimits.observedPpm).toBeNull()
    expect(noLimits.expectedPpm).toBeNull()
    const constant = capabilityFromValues([2, 2, 2], { lsl: 1, usl: 3 })
    expect(constant.sigmaOverall).toBe(0)
    expect(constant.cpk).toBeNull()
    expect(() => capabilityFromValues([1, NaN], { usl: 3 })).toThrow(RangeError)
  })
})

import { describe, expect, it } from 'vitest'
import {
  integratePhaseNoise,
  rmsJitterSeconds,
  rmsPhaseRad,
  type PhaseNoisePointTuple,
} from '../../../shared/utils/jitter'
import { mulberry32 } from '../helpers/prng'

// Wetterlin, "Calculating jitter from phase noise profile" (after Maxim AN3359): 600 MHz carrier.
const EXAMPLE_B: PhaseNoisePointTuple[] = [
  [10, -60],
  [100, -75],
  [1e3, -85],
  [10e3, -95],
]

/** L(f) linear in dB against ln f between points; written independently of the code under test. */
function maskLevel(sorted: readonly PhaseNoisePointTuple[], f: number): number {
  for (let i = 0; i + 1 < sorted.length; i++) {
    const [fa, la] = sorted[i]!
    const [fb, lb] = sorted[i + 1]!
    if (f >= fa && f <= fb) return la + ((lb - la) * (Math.log(f) - Math.log(fa))) / (Math.log(fb) - Math.log(fa))
  }
  throw new Error(`${f} outside mask`)
}

/** ∫ 10^(L/10) df = ∫ 10^(L(e^u)/10)·e^u du by the midpoint rule with 200 000 steps in u = ln f. */
function midpointLogIntegral(sorted: readonly PhaseNoisePointTuple[], f1: number, f2: number): number {
  const steps = 200_000
  const u1 = Math.log(f1)
  const h = (Math.log(f2) - u1) / steps
  let s = 0
  for (let i = 0; i < steps; i++) {
    const f = Math.exp(u1 + (i + 0.5) * h)
    s += 10 ** (maskLevel(sorted, f) / 10) * f
  }
  return s * h
}

describe('rmsPhaseRad and the jitter formula', () => {
  it('−67 dBc at 100 MHz is 6.317e-4 rad and 1.005 ps (RF Wireless World, phase noise to jitter converter)', () => {
    const area = 10 ** (-67 / 10)
    const phase = rmsPhaseRad(area)
    expect(phase).toBeCloseTo(6.317e-4, 7)
    expect(phase / (2 * Math.PI * 100e6)).toBeCloseTo(1.005e-12, 15)
  })

  it('gives the same figures for a flat mask whose integral is −67 dBc (flat segment: φ = √(2·10^(L/10)·(f2 − f1)), Signal Processing Group note)', () => {
    const level = -67 - 10 * Math.log10(1e6)
    const result = rmsJitterSeconds(
      [
        [1e3, level],
        [1.001e6, level],
      ],
      1e3,
      1.001e6,
      100e6,
    )
    expect(result.areaDbc).toBeCloseTo(-67, 9)
    expect(result.phaseRad).toBeCloseTo(6.317e-4, 7)
    expect(result.jitterS).toBeCloseTo(1.005e-12, 15)
  })

  it('rejects a negative area', () => {
    expect(() => rmsPhaseRad(-1e-9)).toThrow(RangeError)
  })
})

describe('integratePhaseNoise', () => {
  it('reproduces the piecewise power-law example: 1.99 ps at 600 MHz, 10 Hz–10 kHz (Wetterlin spreadsheet)', () => {
    const r = rmsJitterSeconds(EXAMPLE_B, 10, 10e3, 600e6)
    expect(Math.abs(r.jitterS - 1.99e-12)).toBeLessThanOrEqual(0.005e-12)
    expect(r.complete).toBe(true)
  })

  it('is not the linear trapezoid, which gives about 3.307 ps on the same points', () => {
    let trapezoid = 0
    for (let i = 0; i + 1 < EXAMPLE_B.length; i++) {
      const [fa, la] = EXAMPLE_B[i]!
      const [fb, lb] = EXAMPLE_B[i + 1]!
      trapezoid += ((10 ** (la / 10) + 10 ** (lb / 10)) / 2) * (fb - fa)
    }
    const trapezoidJitter = Math.sqrt(2 * trapezoid) / (2 * Math.PI * 600e6)
    expect(trapezoidJitter).toBeCloseTo(3.307e-12, 14)
    const r = rmsJitterSeconds(EXAMPLE_B, 10, 10e3, 600e6)
    expect(Math.abs(r.jitterS - trapezoidJitter)).toBeGreaterThan(1e-12)
  })

  it('uses the logarithm for a −10 dB/decade segment: S·f·ln(f2/f1) (Wetterlin, correction for a = −10)', () => {
    const r = integratePhaseNoise(
      [
        [100, -100],
        [1000, -110],
      ],
      100,
      1000,
    )
    expect(r.areaLinear / (1e-10 * 100 * Math.LN10)).toBeCloseTo(1, 12)
  })

  it('stays continuous for slopes just either side of −10 dB/decade', () => {
    const at = (slope: number) =>
      integratePhaseNoise(
        [
          [100, -100],
          [1000, -100 + slope],
        ],
        100,
        1000,
      ).areaLinear
    const exact = at(-10)
    expect(Math.abs(at(-10 + 1e-9) / exact - 1)).toBeLessThan(1e-8)
    expect(Math.abs(at(-10 - 1e-9) / exact - 1)).toBeLessThan(1e-8)
    expect(at(-10 + 1e-9)).toBeGreaterThan(exact)
    expect(at(-10 - 1e-9)).toBeLessThan(exact)
  })

  it('sorts the points first', () => {
    const shuffled: PhaseNoisePointTuple[] = [EXAMPLE_B[2]!, EXAMPLE_B[0]!, EXAMPLE_B[3]!, EXAMPLE_B[1]!]
    expect(integratePhaseNoise(shuffled, 10, 10e3).areaLinear).toBe(integratePhaseNoise(EXAMPLE_B, 10, 10e3).areaLinear)
  })

  it('interpolates in log f at band edges that fall between points', () => {
    const sorted = EXAMPLE_B
    const r = integratePhaseNoise(sorted, 31.6, 4321)
    expect(r.complete).toBe(true)
    expect(r.coveredFrom).toBe(31.6)
    expect(r.coveredTo).toBe(4321)
    expect(Math.abs(r.areaLinear / midpointLogIntegral(sorted, 31.6, 4321) - 1)).toBeLessThan(1e-6)
  })

  it('integrates only the part of the band the data cover and says so', () => {
    const r = integratePhaseNoise(EXAMPLE_B, 1, 1e6)
    expect(r.complete).toBe(false)
    expect(r.coveredFrom).toBe(10)
    expect(r.coveredTo).toBe(10e3)
    expect(r.areaLinear).toBe(integratePhaseNoise(EXAMPLE_B, 10, 10e3).areaLinear)

    const upper = integratePhaseNoise(EXAMPLE_B, 500, 1e6)
    expect(upper).toMatchObject({ complete: false, coveredFrom: 500, coveredTo: 10e3 })
  })

  it('throws when the band misses the data or there are too few points', () => {
    expect(() => integratePhaseNoise(EXAMPLE_B, 20e3, 1e6)).toThrow(/does not overlap/)
    expect(() => integratePhaseNoise(EXAMPLE_B, 1, 10)).toThrow(/does not overlap/)
    expect(() => integratePhaseNoise([[100, -90]], 10, 1e3)).toThrow(/at least 2/)
    expect(() => integratePhaseNoise(EXAMPLE_B, 1e3, 100)).toThrow(RangeError)
    expect(() => integratePhaseNoise([[100, -90], [100, -95]], 10, 1e3)).toThrow(/duplicate/)
    expect(() => integratePhaseNoise([[0, -90], [100, -95]], 10, 1e3)).toThrow(RangeError)
  })

  it('agrees with a 200 000-step midpoint integration in log f on random masks to 1e-6', () => {
    const rand = mulberry32(0x7e5c37)
    let compared = 0
    for (let trial = 0; trial < 30; trial++) {
      const count = 2 + Math.floor(rand() * 10)
      const offsets = new Set<number>()
      while (offsets.size < count) offsets.add(10 ** (rand() * 7))
      const points: PhaseNoisePointTuple[] = [...offsets].map((f) => [f, -170 + rand() * 130] as const)
      const sorted = [...points].sort((a, b) => a[0] - b[0])
      const first = sorted[0]![0]
      const last = sorted[sorted.length - 1]![0]
      // Band edges anywhere from half a decade below the data to half a decade above.
      const lo = Math.log10(first) - 0.5
      const span = Math.log10(last) - Math.log10(first) + 1
      let f1 = 10 ** (lo + rand() * span)
      let f2 = 10 ** (lo + rand() * span)
      if (f1 > f2) [f1, f2] = [f2, f1]
      if (f2 <= first || f1 >= last || f1 === f2) continue

      const r = integratePhaseNoise(points, f1, f2)
      expect(r.coveredFrom).toBe(Math.max(f1, first))
      expect(r.coveredTo).toBe(Math.min(f2, last))
      const reference = midpointLogIntegral(sorted, r.coveredFrom, r.coveredTo)
      expect(Math.abs(r.areaLinear / reference - 1)).toBeLessThan(1e-6)
      compared++
    }
    expect(compared).toBeGreaterThanOrEqual(15)
  })

  it('an ideal ×N multiplier leaves time jitter unchanged: L + 20·log10 N at N·f0 (common practice)', () => {
    const f0 = 100e6
    for (const n of [2, 3, 8]) {
      const multiplied = EXAMPLE_B.map(([f, l]) => [f, l + 20 * Math.log10(n)] as const)
      const before = rmsJitterSeconds(EXAMPLE_B, 10, 10e3, f0)
      const after = rmsJitterSeconds(multiplied, 10, 10e3, n * f0)
      expect(after.phaseRad / before.phaseRad).toBeCloseTo(n, 10)
      expect(after.jitterS / before.jitterS).toBeCloseTo(1, 12)
    }
  })
})

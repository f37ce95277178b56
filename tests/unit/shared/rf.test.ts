import { describe, expect, it } from 'vitest'
import {
  dbmToMw,
  idealMultipliedPhaseNoise,
  multiplicationPenaltyDb,
  mwToDbm,
  ppmError,
  squareWaveHarmonicAmplitude,
  squareWaveHarmonicDbc,
  sumPowersDbm,
} from '../../../shared/utils/rf'

describe('ppmError', () => {
  it('100 ppm of 100 MHz is 10 kHz (Paritycheck blog, "Converting ppm to frequency")', () => {
    expect(ppmError(100.01e6, 100e6)).toBeCloseTo(100, 9)
    expect(ppmError(99.99e6, 100e6)).toBeCloseTo(-100, 9)
  })

  it('4.6 ppm is 4.6/10⁶ (ATIS Telecom Glossary, "fractional frequency offset")', () => {
    expect(ppmError(10e6 * (1 + 4.6e-6), 10e6)).toBeCloseTo(4.6, 9)
  })

  it('the fractional error survives multiplication: 32 MHz +25 ppm used to make 1 GHz is +25 kHz (OneSDR ppm calculator)', () => {
    const referenceHz = 32e6 * (1 + 25e-6)
    const outputHz = referenceHz * (1e9 / 32e6)
    expect(outputHz - 1e9).toBeCloseTo(25e3, 3)
    expect(ppmError(outputHz, 1e9)).toBeCloseTo(25, 9)
    expect(ppmError(referenceHz, 32e6)).toBeCloseTo(ppmError(outputHz, 1e9), 9)
  })

  it('rejects a nominal frequency that is not positive', () => {
    expect(() => ppmError(1, 0)).toThrow(RangeError)
    expect(() => ppmError(1, -5)).toThrow(RangeError)
    expect(() => ppmError(Number.NaN, 5)).toThrow(RangeError)
  })
})

describe('multiplicationPenaltyDb', () => {
  it('×2 +6 dB, ×4 +12 dB, ×8 +18 dB, ×100 +40 dB (RF Essentials knowledge base, phase noise through a multiplier)', () => {
    // Published as whole decibels, so compared to half a decibel.
    expect(multiplicationPenaltyDb(2)).toBeCloseTo(6, 0)
    expect(multiplicationPenaltyDb(4)).toBeCloseTo(12, 0)
    expect(multiplicationPenaltyDb(8)).toBeCloseTo(18, 0)
    expect(multiplicationPenaltyDb(8) - multiplicationPenaltyDb(4)).toBeCloseTo(multiplicationPenaltyDb(2), 12)
    expect(multiplicationPenaltyDb(100)).toBeCloseTo(40, 12)
  })

  it('×3 is 9.542 dB and a ÷N divider lowers noise by the same amount (B. Griffiths, "Ideal Frequency Multiplication and Division")', () => {
    expect(multiplicationPenaltyDb(3)).toBeCloseTo(9.542425, 6)
    expect(multiplicationPenaltyDb(1 / 3)).toBeCloseTo(-9.542425, 6)
    expect(multiplicationPenaltyDb(1)).toBe(0)
  })

  it('rejects factors that are not positive', () => {
    expect(() => multiplicationPenaltyDb(0)).toThrow(RangeError)
    expect(() => multiplicationPenaltyDb(-2)).toThrow(RangeError)
  })
})

describe('idealMultipliedPhaseNoise', () => {
  it('100 MHz crystal at −160 dBc/Hz (10 kHz) ×100 to 10 GHz gives −120 dBc/Hz (RF Essentials worked example)', () => {
    expect(idealMultipliedPhaseNoise(-160, 100)).toBeCloseTo(-120, 12)
  })
})

describe('dBm ↔ mW', () => {
  // RF Cafe "mW to dBm"; Fed. Std. 1037C "dBm" (0 dBm = 1 mW); rfdesign.info (1 W = 30 dBm).
  // [dBm, mW, decimals published for mW]; compared to half a unit in the last published digit.
  const table: [number, number, number][] = [
    [0, 1, 12],
    [30, 1000, 9],
    [3, 1.99526, 5],
    [-3, 0.501187, 6],
    [-20, 0.01, 12],
    [20, 100, 10],
    [13, 19.9526, 4],
    [-7.5, 0.177828, 6],
  ]
  it.each(table)('%f dBm = %f mW', (dbm, mw, decimals) => {
    expect(dbmToMw(dbm)).toBeCloseTo(mw, decimals)
    expect(mwToDbm(mw)).toBeCloseTo(dbm, 4)
  })

  it('zero power is −∞ dBm and negative power is an error', () => {
    expect(mwToDbm(0)).toBe(-Infinity)
    expect(() => mwToDbm(-1)).toThrow(RangeError)
  })
})

describe('sumPowersDbm', () => {
  it('sums in linear units: 10 dBm + 10 dBm = 13.0103 dBm (common practice: two equal powers add 10·log10 2 dB)', () => {
    expect(sumPowersDbm([10, 10])).toBeCloseTo(13.0103, 4)
  })

  it('0 dBm + 0 dBm + … (ten of them) = 10 dBm; 1 mW + 100 mW = 101 mW (RF Cafe conversions)', () => {
    expect(sumPowersDbm(Array.from({ length: 10 }, () => 0))).toBeCloseTo(10, 12)
    expect(sumPowersDbm([0, 20])).toBeCloseTo(10 * Math.log10(101), 12)
  })

  it('a power far below another hardly changes the total, and no power is −∞ dBm', () => {
    expect(sumPowersDbm([0, -60])).toBeCloseTo(10 * Math.log10(1.000001), 12)
    expect(sumPowersDbm([])).toBe(-Infinity)
  })
})

describe('square-wave harmonics', () => {
  // Weisstein, CRC Concise Encyclopedia of Mathematics, "Square Wave"; UvA SOWISO Fourier-series example: b_n = 4/(nπ), odd n only.
  const table: [number, number, number][] = [
    [1, 1.27324, 0],
    [3, 0.424413, -9.5424],
    [5, 0.254648, -13.9794],
    [7, 0.181891, -16.902],
    [9, 0.141471, -19.0849],
  ]
  it.each(table)('H%i: amplitude %f, %f dBc', (n, amplitude, dbc) => {
    expect(squareWaveHarmonicAmplitude(n)).toBeCloseTo(amplitude, 5)
    expect(squareWaveHarmonicDbc(n)).toBeCloseTo(dbc, 4)
  })

  it('even harmonics are absent', () => {
    expect(squareWaveHarmonicAmplitude(2)).toBe(0)
    expect(squareWaveHarmonicDbc(2)).toBe(-Infinity)
    expect(squareWaveHarmonicDbc(8)).toBe(-Infinity)
  })

  it('agrees with a direct numerical Fourier integral of the square wave', () => {
    // b_n = (1/π)∫₀^{2π} sq(x)·sin(nx) dx, midpoint rule; sq = +1 on (0, π), −1 on (π, 2π).
    const steps = 200_000
    const h = (2 * Math.PI) / steps
    const bn = (n: number): number => {
      let s = 0
      for (let i = 0; i < steps; i++) {
        const x = (i + 0.5) * h
        s += (x < Math.PI ? 1 : -1) * Math.sin(n * x)
      }
      return (s * h) / Math.PI
    }
    const b1 = bn(1)
    for (const n of [3, 5, 7]) {
      expect(20 * Math.log10(bn(n) / b1)).toBeCloseTo(squareWaveHarmonicDbc(n), 6)
    }
    expect(Math.abs(bn(2))).toBeLessThan(1e-9)
  })

  it('rejects harmonic numbers that are not positive integers', () => {
    expect(() => squareWaveHarmonicDbc(0)).toThrow(RangeError)
    expect(() => squareWaveHarmonicDbc(2.5)).toThrow(RangeError)
  })
})

import { mean as ssMean, sampleStandardDeviation, sampleVariance } from 'simple-statistics'
import { describe, expect, it } from 'vitest'
import {
  addValue,
  emptyMoments,
  mergeMoments,
  momentsFromShiftedSums,
  momentsFromValues,
  stdDev,
  variance,
} from '../../../shared/utils/moments'
import { mulberry32, normalSample } from '../helpers/prng'

// NIST Statistical Reference Datasets, univariate summary statistics (https://www.itl.nist.gov/div898/strd/univ/).
// Data transcribed from public copies of Michelso.dat, Mavro.dat and Lew.dat; matching the certified values below
// to 12+ digits is what confirms the typed-in values.
const MICHELSON = [
  299.85, 299.74, 299.9, 300.07, 299.93, 299.85, 299.95, 299.98, 299.98, 299.88, 300.0, 299.98, 299.93, 299.65, 299.76,
  299.81, 300.0, 300.0, 299.96, 299.96, 299.96, 299.94, 299.96, 299.94, 299.88, 299.8, 299.85, 299.88, 299.9, 299.84,
  299.83, 299.79, 299.81, 299.88, 299.88, 299.83, 299.8, 299.79, 299.76, 299.8, 299.88, 299.88, 299.88, 299.86, 299.72,
  299.72, 299.62, 299.86, 299.97, 299.95, 299.88, 299.91, 299.85, 299.87, 299.84, 299.84, 299.85, 299.84, 299.84,
  299.84, 299.89, 299.81, 299.81, 299.82, 299.8, 299.77, 299.76, 299.74, 299.75, 299.76, 299.91, 299.92, 299.89,
  299.86, 299.88, 299.72, 299.84, 299.85, 299.85, 299.78, 299.89, 299.84, 299.78, 299.81, 299.76, 299.81, 299.79,
  299.81, 299.82, 299.85, 299.87, 299.87, 299.81, 299.74, 299.81, 299.94, 299.95, 299.8, 299.81, 299.87,
]
const MAVRO = [
  2.0018, 2.0017, 2.0018, 2.0019, 2.0018, 2.0017, 2.0015, 2.0014, 2.0015, 2.0015, 2.0017, 2.0018, 2.0018, 2.0019, 2.0019,
  2.0021, 2.002, 2.0016, 2.0014, 2.0013, 2.0013, 2.0015, 2.0015, 2.0016, 2.0015, 2.0014, 2.0013, 2.0014, 2.0015, 2.0014,
  2.0015, 2.0016, 2.0015, 2.0016, 2.0019, 2.002, 2.002, 2.0021, 2.0022, 2.0023, 2.0024, 2.0025, 2.0027, 2.0026, 2.0026,
  2.0026, 2.0027, 2.0026, 2.0025, 2.0024,
]
const LEW = [
  -213, -564, -35, -15, 141, 115, -420, -360, 203, -338, -431, 194, -220, -513, 154, -125, -559, 92, -21, -579, -52, 99,
  -543, -175, 162, -457, -346, 204, -300, -474, 164, -107, -572, -8, 83, -541, -224, 180, -420, -374, 201, -236, -531,
  83, 27, -564, -112, 131, -507, -254, 199, -311, -495, 143, -46, -579, -90, 136, -472, -338, 202, -287, -477, 169,
  -124, -568, 17, 48, -568, -135, 162, -430, -422, 172, -74, -577, -13, 92, -534, -243, 194, -355, -465, 156, -81,
  -578, -64, 139, -449, -384, 193, -198, -538, 110, -44, -577, -6, 66, -552, -164, 161, -460, -344, 205, -281, -504,
  134, -28, -576, -118, 156, -437, -381, 200, -220, -540, 83, 11, -568, -160, 172, -414, -408, 188, -125, -572, -32,
  139, -492, -321, 205, -262, -504, 142, -83, -574, 0, 48, -571, -106, 137, -501, -266, 190, -391, -406, 194, -186,
  -553, 83, -13, -577, -49, 103, -515, -280, 201, 300, -506, 131, -45, -578, -80, 138, -462, -361, 201, -211, -554,
  32, 74, -533, -235, 187, -372, -442, 182, -147, -566, 25, 68, -535, -244, 194, -351, -463, 174, -125, -570, 15, 72,
  -550, -190, 172, -424, -385, 198, -218, -536, 96,
]

const relErr = (a: number, b: number) => Math.abs(a - b) / Math.abs(b)

// NIST NumAcc3/NumAcc4 (higher difficulty): 1001 values, c + 0.2 followed by 500 pairs (c + 0.1, c + 0.3);
// certified mean c + 0.2 and sd 0.1. The layout is from memory; the certified values are those NIST publishes.
function numAcc(c: number): number[] {
  const values = [c + 0.2]
  for (let i = 0; i < 500; i++) values.push(c + 0.1, c + 0.3)
  return values
}

describe('NIST StRD certified values', () => {
  it('Michelson: mean 299.852400000000, sd 0.0790105478190518', () => {
    const m = momentsFromValues(MICHELSON)
    expect(m.n).toBe(100)
    expect(relErr(m.mean, 299.8524)).toBeLessThan(1e-14)
    expect(relErr(stdDev(m), 0.0790105478190518)).toBeLessThan(1e-11)
  })

  it('Mavro: mean 2.00185600000000, sd 0.000429123454003053', () => {
    const m = momentsFromValues(MAVRO)
    expect(m.n).toBe(50)
    expect(relErr(m.mean, 2.001856)).toBeLessThan(1e-14)
    expect(relErr(stdDev(m), 0.000429123454003053)).toBeLessThan(1e-11)
  })

  it('Lew: mean −177.435000000000, sd 277.332168044316', () => {
    const m = momentsFromValues(LEW)
    expect(m.n).toBe(200)
    expect(relErr(m.mean, -177.435)).toBeLessThan(1e-14)
    expect(relErr(stdDev(m), 277.332168044316)).toBeLessThan(1e-13)
  })

  it('NumAcc3 and NumAcc4: large offset, sd 0.1', () => {
    for (const c of [1e6, 1e7]) {
      const m = momentsFromValues(numAcc(c))
      expect(m.n).toBe(1001)
      expect(relErr(m.mean, c + 0.2)).toBeLessThan(1e-15)
      expect(relErr(stdDev(m), 0.1)).toBeLessThan(1e-8)
    }
  })

  it('shifted sums reproduce the certified values when the shift is near the data', () => {
    for (const [data, mean, sd] of [
      [MAVRO, 2.001856, 0.000429123454003053],
      [MICHELSON, 299.8524, 0.0790105478190518],
      [numAcc(1e7), 1e7 + 0.2, 0.1],
    ] as const) {
      const shift = data[0] as number
      let sumD = 0
      let sumSqD = 0
      for (const x of data) {
        sumD += x - shift
        sumSqD += (x - shift) ** 2
      }
      const m = momentsFromShiftedSums(data.length, shift, sumD, sumSqD, Math.min(...data), Math.max(...data))
      expect(relErr(m.mean, mean)).toBeLessThan(1e-14)
      expect(relErr(stdDev(m), sd)).toBeLessThan(1e-8)
      expect(m.min).toBe(Math.min(...data))
      expect(m.max).toBe(Math.max(...data))
    }
  })
})

describe('Welford updates against simple-statistics', () => {
  it('mean, variance and sd match on generated data', () => {
    const rand = mulberry32(1234)
    for (const [n, mu, sd] of [[2, 0, 1], [10, 5, 0.1], [1000, 1e6, 3], [5000, -40, 250]] as const) {
      const xs = normalSample(rand, n, mu, sd)
      const m = momentsFromValues(xs)
      expect(m.n).toBe(n)
      expect(relErr(m.mean, ssMean(xs))).toBeLessThan(1e-12)
      expect(relErr(variance(m), sampleVariance(xs))).toBeLessThan(1e-9)
      expect(relErr(stdDev(m), sampleStandardDeviation(xs))).toBeLessThan(1e-9)
      expect(m.min).toBe(Math.min(...xs))
      expect(m.max).toBe(Math.max(...xs))
    }
  })

  it('variance is NaN below two values and 0 for constant data', () => {
    expect(Number.isNaN(variance(emptyMoments()))).toBe(true)
    expect(Number.isNaN(variance(addValue(emptyMoments(), 3)))).toBe(true)
    expect(variance(momentsFromValues([4, 4, 4, 4]))).toBe(0)
  })

  it('does not mutate its input', () => {
    const m = momentsFromValues([1, 2])
    const copy = { ...m }
    addValue(m, 10)
    expect(m).toEqual(copy)
  })
})

describe('mergeMoments', () => {
  it('merging chunks equals the whole sample (simple-statistics reference)', () => {
    const rand = mulberry32(77)
    const xs = normalSample(rand, 3001, 1e5, 2)
    const cuts = [0, 1, 17, 500, 1999, 2000, 3001]
    let merged = emptyMoments()
    for (let i = 1; i < cuts.length; i++) merged = mergeMoments(merged, momentsFromValues(xs.slice(cuts[i - 1], cuts[i])))
    expect(merged.n).toBe(3001)
    expect(relErr(merged.mean, ssMean(xs))).toBeLessThan(1e-13)
    expect(relErr(stdDev(merged), sampleStandardDeviation(xs))).toBeLessThan(1e-9)
    expect(merged.min).toBe(Math.min(...xs))
    expect(merged.max).toBe(Math.max(...xs))
  })

  it('is symmetric and has the empty sample as identity', () => {
    const a = momentsFromValues([1, 2, 3])
    const b = momentsFromValues([4, 5])
    const ab = mergeMoments(a, b)
    const ba = mergeMoments(b, a)
    // {1..5}: mean 3, sample variance 2.5.
    expect(ab.mean).toBeCloseTo(3, 14)
    expect(variance(ab)).toBeCloseTo(2.5, 14)
    expect(ba.mean).toBeCloseTo(ab.mean, 14)
    expect(ba.m2).toBeCloseTo(ab.m2, 12)
    expect(mergeMoments(emptyMoments(), a)).toEqual(a)
    expect(mergeMoments(a, emptyMoments())).toEqual(a)
  })
})

describe('momentsFromShiftedSums', () => {
  it('agrees with Welford for any shift and clamps tiny negative m2', () => {
    const xs = [10.5, 11.25, 9.75, 10, 10.5]
    const w = momentsFromValues(xs)
    for (const shift of [0, 10, 10.4, -3]) {
      const sumD = xs.reduce((s, x) => s + (x - shift), 0)
      const sumSqD = xs.reduce((s, x) => s + (x - shift) ** 2, 0)
      const m = momentsFromShiftedSums(xs.length, shift, sumD, sumSqD, 9.75, 11.25)
      expect(m.mean).toBeCloseTo(w.mean, 12)
      expect(variance(m)).toBeCloseTo(variance(w), 12)
    }
    // Σd² slightly below (Σd)²/n, as rounding can leave it, must not give a negative variance.
    expect(momentsFromShiftedSums(3, 0, 3e8, 3e16 - 1, 1e8, 1e8).m2).toBe(0)
    expect(momentsFromShiftedSums(0, 5, 0, 0, 0, 0)).toEqual(emptyMoments())
  })
})

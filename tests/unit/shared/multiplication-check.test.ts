import { describe, expect, it } from 'vitest'
import { interpolatePhaseNoise, multiplicationCheck } from '../../../shared/utils/multiplication-check'

describe('multiplicationCheck', () => {
  it('100 MHz crystal at −160 dBc/Hz (10 kHz) ×100 ideally gives −120 dBc/Hz (RF Essentials worked example)', () => {
    const [row] = multiplicationCheck([{ offsetHz: 10e3, value: -160 }], 100, [{ offsetHz: 10e3, value: -117.5 }])
    expect(row!.ideal).toBeCloseTo(-120, 12)
    expect(row!.excessDb).toBeCloseTo(2.5, 12)
    expect(row!.implausible).toBe(false)
  })

  it('a tripler adds 9.54 dB at every offset (common practice: 20·log10 3)', () => {
    const reference = [
      { offsetHz: 100, value: -120 },
      { offsetHz: 1e3, value: -140 },
      { offsetHz: 10e3, value: -150 },
    ]
    const rows = multiplicationCheck(reference, 3, [
      { offsetHz: 100, value: -110.2 },
      { offsetHz: 1e3, value: -130.4 },
      { offsetHz: 10e3, value: -140.45 },
    ])
    expect(rows.map((r) => r.ideal)).toEqual([
      expect.closeTo(-110.46, 2),
      expect.closeTo(-130.46, 2),
      expect.closeTo(-140.46, 2),
    ])
    expect(rows[0]!.excessDb).toBeCloseTo(0.2576, 4)
    expect(rows[1]!.excessDb).toBeCloseTo(0.0576, 4)
    expect(rows[2]!.excessDb).toBeCloseTo(0.0076, 4)
    expect(rows.map((r) => r.implausible)).toEqual([false, false, false])
  })

  it('a result exactly at the ideal is plausible', () => {
    const [row] = multiplicationCheck([{ offsetHz: 1e3, value: -140 }], 3, [{ offsetHz: 1e3, value: -140 + 20 * Math.log10(3) }])
    expect(Math.abs(row!.excessDb!)).toBeLessThan(1e-9)
    expect(row!.implausible).toBe(false)
  })

  it('flags an output quieter than the reference times N² beyond its uncertainty', () => {
    const reference = [{ offsetHz: 1e3, value: -140 }]
    const [noU, withinU, beyondU] = multiplicationCheck(reference, 8, [
      { offsetHz: 1e3, value: -123 },
      { offsetHz: 1e3, value: -123, uncertainty: 1.5 },
      { offsetHz: 1e3, value: -123, uncertainty: 0.5 },
    ])
    // Ideal ×8 is −140 + 18.06 = −121.94 dBc/Hz; the results are 1.06 dB quieter.
    expect(noU!.excessDb).toBeCloseTo(-1.0618, 4)
    expect(noU!.implausible).toBe(true)
    expect(withinU!.implausible).toBe(false)
    expect(beyondU!.implausible).toBe(true)
  })

  it('interpolates the reference linearly in dB against log f between points', () => {
    const reference = [
      { offsetHz: 1e3, value: -140 },
      { offsetHz: 100, value: -120 },
    ]
    // √10 · 100 Hz is half-way in log f: −130 dBc/Hz, so ×2 ideal is −123.98.
    const [row] = multiplicationCheck(reference, 2, [{ offsetHz: 100 * Math.sqrt(10), value: -120 }])
    expect(row!.ideal).toBeCloseTo(-130 + 6.0206, 4)
    expect(interpolatePhaseNoise(reference, 200)).toBeCloseTo(-120 - 20 * Math.log10(2), 10)
  })

  it('does not extrapolate: offsets outside the reference get no ideal and are never flagged', () => {
    const reference = [
      { offsetHz: 100, value: -120 },
      { offsetHz: 1e3, value: -140 },
    ]
    const rows = multiplicationCheck(reference, 2, [
      { offsetHz: 10, value: -200 },
      { offsetHz: 10e3, value: -200 },
    ])
    for (const r of rows) expect(r).toMatchObject({ ideal: null, excessDb: null, implausible: false })
    expect(multiplicationCheck([], 2, [{ offsetHz: 1e3, value: -100 }])[0]!.ideal).toBeNull()
  })

  it('a single reference point serves only its own offset', () => {
    const rows = multiplicationCheck([{ offsetHz: 1e3, value: -140 }], 2, [
      { offsetHz: 1e3, value: -130 },
      { offsetHz: 1001, value: -130 },
    ])
    expect(rows[0]!.ideal).toBeCloseTo(-133.9794, 4)
    expect(rows[1]!.ideal).toBeNull()
  })

  it('rejects a bad multiplication factor or a duplicated reference offset', () => {
    expect(() => multiplicationCheck([{ offsetHz: 1e3, value: -140 }], 0, [])).toThrow(RangeError)
    expect(() =>
      multiplicationCheck(
        [
          { offsetHz: 1e3, value: -140 },
          { offsetHz: 1e3, value: -141 },
        ],
        2,
        [],
      ),
    ).toThrow(/duplicate/)
  })
})

import { describe, expect, it } from 'vitest'
import { frequencyTolerancePpm, referenceFrequencyCheck } from '../../../shared/utils/reference-frequency'
import { ppmError } from '../../../shared/utils/rf'

describe('referenceFrequencyCheck', () => {
  it('follows the reference through multiplication: a fractional error is preserved (OneSDR ppm calculator)', () => {
    // https://www.onesdr.com/ppm-to-hz-calculator/: a 32 MHz ±25 ppm reference used to make 1 GHz gives ±25 kHz
    const ref = 32e6 * (1 + 25e-6)
    expect(ref).toBeCloseTo(32_000_800, 6)
    const c = referenceFrequencyCheck(1_000_025_000, ref, 31.25, 2)
    expect(c.expectedHz).toBeCloseTo(1_000_025_000, 3)
    expect(c.offsetPpm).toBeCloseTo(0, 9)
    expect(c.agrees).toBe(true)
    // while against the nominal 1 GHz the same output is 25 ppm off: what frequency_error judges
    expect(ppmError(1_000_025_000, 1e9)).toBeCloseTo(25, 9)
  })

  it('flags an output 100 ppm away from N × the reference (Paritycheck: 100 ppm of 100 MHz is 10 kHz)', () => {
    const c = referenceFrequencyCheck(100.01e6, 100e6, 1, 2)
    expect(c.offsetPpm).toBeCloseTo(100, 6)
    expect(c.agrees).toBe(false)
  })

  it('accepts a disagreement up to the tolerance widened by the frequency reading\'s uncertainty', () => {
    // ×3 of 125 MHz: 375 MHz; 2 ppm of it is 750 Hz
    expect(referenceFrequencyCheck(375e6 + 750, 125e6, 3, 2).agrees).toBe(true)
    expect(referenceFrequencyCheck(375e6 + 760, 125e6, 3, 2).agrees).toBe(false)
    // 15 Hz of expanded uncertainty is 0.04 ppm more
    expect(referenceFrequencyCheck(375e6 + 760, 125e6, 3, 2, 15).agrees).toBe(true)
    expect(referenceFrequencyCheck(375e6 - 770, 125e6, 3, 2, 15).agrees).toBe(false)
  })

  it('cannot say without a tolerance, and refuses a reference or factor that is not positive', () => {
    expect(referenceFrequencyCheck(375e6, 125e6, 3, null).agrees).toBeNull()
    expect(() => referenceFrequencyCheck(375e6, 0, 3, 2)).toThrow(RangeError)
    expect(() => referenceFrequencyCheck(375e6, 125e6, 0, 2)).toThrow(RangeError)
  })
})

describe('frequencyTolerancePpm', () => {
  it('is the larger magnitude of the frequency-error limits', () => {
    expect(frequencyTolerancePpm({ lsl: -2, usl: 2 })).toBe(2)
    expect(frequencyTolerancePpm({ lsl: -1, usl: 3 })).toBe(3)
    expect(frequencyTolerancePpm({ lsl: null, usl: 1.5 })).toBe(1.5)
    expect(frequencyTolerancePpm({ lsl: null, usl: null })).toBeNull()
    expect(frequencyTolerancePpm(undefined)).toBeNull()
  })
})

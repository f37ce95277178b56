import { describe, expect, it } from 'vitest'
import { decadeRange, limitMaskFromMeasurements, logFrequencyLabel } from '../../../shared/utils/phase-noise-plot'
import { chipVerdict, measurementLabel } from '../../../shared/utils/measurement-display'

const pn = (offsetHz: number, usl: number | null) => ({ name: 'phase_noise', offsetHz, limit: usl === null ? null : { usl } })

describe('limitMaskFromMeasurements', () => {
  it('takes the USL per offset from the phase-noise snapshots, sorted by offset', () => {
    const mask = limitMaskFromMeasurements([
      pn(10_000, -144), { name: 'output_power', limit: { usl: 8.5 } }, pn(100, -114), pn(1000, -134), pn(100_000, null),
      { name: 'harmonic_rejection', limit: { usl: null } },
    ])
    expect(mask).toEqual([{ offsetHz: 100, usl: -114 }, { offsetHz: 1000, usl: -134 }, { offsetHz: 10_000, usl: -144 }])
  })

  it('is empty when no phase noise carried a limit', () => {
    expect(limitMaskFromMeasurements([pn(100, null), { name: 'output_power', limit: null }])).toEqual([])
  })
})

describe('log frequency axis', () => {
  it('covers whole decades', () => {
    expect(decadeRange(100, 1e6)).toEqual([2, 6])
    expect(decadeRange(150, 2e6)).toEqual([2, 7])
    expect(decadeRange(1000, 1000)).toEqual([3, 4])
    expect(() => decadeRange(0, 10)).toThrow(RangeError)
  })

  it('labels log10 positions in Hz, kHz and MHz', () => {
    expect([2, 3, 4, 5, 6].map(logFrequencyLabel)).toEqual(['100 Hz', '1 kHz', '10 kHz', '100 kHz', '1 MHz'])
    expect(logFrequencyLabel(Math.log10(3000))).toBe('3 kHz')
  })
})

describe('measurement display', () => {
  it('labels with the qualifier', () => {
    expect(measurementLabel({ name: 'phase_noise', offsetHz: 10_000 })).toBe('Phase noise @ 10 kHz')
    expect(measurementLabel({ name: 'harmonic_rejection', harmonic: 2 })).toBe('Harmonic rejection @ H2')
    expect(measurementLabel({ name: 'output_power' })).toBe('Output power')
    expect(measurementLabel({ name: 'case_temperature' })).toBe('case temperature')
  })

  it('marks a pass inside the guard band as marginal, nothing else', () => {
    expect(chipVerdict({ verdict: 'pass', zone: 'guard' })).toBe('marginal')
    expect(chipVerdict({ verdict: 'pass', zone: 'inside' })).toBe('pass')
    expect(chipVerdict({ verdict: 'fail', zone: 'guard' })).toBe('fail')
    expect(chipVerdict({ verdict: 'info', zone: null })).toBe('info')
  })
})

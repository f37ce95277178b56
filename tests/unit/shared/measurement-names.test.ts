import { describe, expect, it } from 'vitest'
import {
  CUSTOM_NAME_PATTERN,
  KNOWN_MEASUREMENTS,
  expectedUnit,
  formatFrequency,
  formatQualifier,
  isKnownMeasurement,
  isValidMeasurementName,
  qualifierKey,
  qualifierKind,
} from '../../../shared/utils/measurement-names'

describe('known measurements', () => {
  it('each has its unit and qualifier kind', () => {
    expect(expectedUnit('output_power')).toBe('dBm')
    expect(expectedUnit('output_frequency')).toBe('Hz')
    expect(expectedUnit('frequency_error')).toBe('ppm')
    expect(expectedUnit('harmonic_rejection')).toBe('dB')
    expect(expectedUnit('phase_noise')).toBe('dBc/Hz')
    expect(expectedUnit('supply_current')).toBe('mA')
    expect(expectedUnit('integrated_jitter')).toBe('s')
    expect(qualifierKind('phase_noise')).toBe('offsetHz')
    expect(qualifierKind('harmonic_rejection')).toBe('harmonic')
    expect(qualifierKind('output_power')).toBeNull()
    expect(KNOWN_MEASUREMENTS.integrated_jitter.derived).toBe(true)
    expect(KNOWN_MEASUREMENTS.phase_noise.derived).toBe(false)
  })

  it('station-defined names have no expected unit or qualifier', () => {
    expect(isKnownMeasurement('spur_level')).toBe(false)
    expect(expectedUnit('spur_level')).toBeNull()
    expect(qualifierKind('spur_level')).toBeNull()
    expect(isKnownMeasurement('toString')).toBe(false)
    expect(expectedUnit('constructor')).toBeNull()
  })

  it('all known names fit the name pattern', () => {
    for (const name of Object.keys(KNOWN_MEASUREMENTS)) expect(CUSTOM_NAME_PATTERN.test(name), name).toBe(true)
  })
})

describe('name pattern', () => {
  it.each(['ab', 'lo_leakage', 'h2_level', 'a'.repeat(48)])('accepts %s', (name) => {
    expect(isValidMeasurementName(name)).toBe(true)
  })
  it.each(['a', '2nd_harmonic', 'Output_power', 'phase-noise', 'power dbm', '_x', 'a'.repeat(49), ''])('rejects %s', (name) => {
    expect(isValidMeasurementName(name)).toBe(false)
  })
})

describe('qualifierKey', () => {
  it('is the offset for phase noise and the harmonic number for harmonic rejection', () => {
    expect(qualifierKey('phase_noise', { offsetHz: 10e3 })).toBe(10e3)
    expect(qualifierKey('phase_noise', { offsetHz: 0.5, harmonic: 3 })).toBe(0.5)
    expect(qualifierKey('harmonic_rejection', { harmonic: 2 })).toBe(2)
  })

  it('is null, never 0, for names without a qualifier', () => {
    expect(qualifierKey('output_power', {})).toBeNull()
    expect(qualifierKey('output_power', { offsetHz: 100 })).toBeNull()
    expect(qualifierKey('spur_level', { offsetHz: 100 })).toBeNull()
  })

  it('throws when a qualified name lacks a valid qualifier', () => {
    expect(() => qualifierKey('phase_noise', {})).toThrow(RangeError)
    expect(() => qualifierKey('phase_noise', { offsetHz: 0 })).toThrow(RangeError)
    expect(() => qualifierKey('harmonic_rejection', { harmonic: 0 })).toThrow(RangeError)
    expect(() => qualifierKey('harmonic_rejection', { harmonic: 2.5 })).toThrow(RangeError)
    expect(() => qualifierKey('harmonic_rejection', { offsetHz: 100 })).toThrow(RangeError)
  })
})

describe('formatQualifier', () => {
  // SI prefixes k = 10³, M = 10⁶, G = 10⁹ (SI Brochure, common practice).
  it.each([
    [10e3, '10 kHz'],
    [1e3, '1 kHz'],
    [100, '100 Hz'],
    [1500, '1.5 kHz'],
    [0.5, '0.5 Hz'],
    [1e6, '1 MHz'],
    [12.5e6, '12.5 MHz'],
    [2e9, '2 GHz'],
    [999_999.9, '1 MHz'],
  ])('offset %f Hz reads %s', (hz, text) => {
    expect(formatQualifier('phase_noise', hz)).toBe(text)
    expect(formatFrequency(hz)).toBe(text)
  })

  it('harmonics read H2, H3…', () => {
    expect(formatQualifier('harmonic_rejection', 2)).toBe('H2')
    expect(formatQualifier('harmonic_rejection', 3)).toBe('H3')
  })

  it('no qualifier reads as nothing', () => {
    expect(formatQualifier('phase_noise', null)).toBe('')
    expect(formatQualifier('output_power', 5)).toBe('')
  })
})

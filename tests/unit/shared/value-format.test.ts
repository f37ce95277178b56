import { describe, expect, it } from 'vitest'
import {
  displayUnitFor, formatCount, formatDefectPpm, formatFixed, formatIndex, formatIndexInterval, formatNumber, formatPercent,
  formatBytes, formatFigure, formatLimits, formatUpperBound, formatWait, formatPValue, formatQuantity, formatRange, formatSigned, formatYield, fromInputUnit, inputUnitFor, parameterLabel, toInputUnit,
} from '../../../shared/utils/value-format'

// Expected strings are written by hand. Digit grouping in threes on both sides of the decimal point, with a narrow
// space, follows the SI Brochure (9th ed., 5.4.4) and ISO 80000-1; the minus is U+2212 as typeset mathematics uses it.
// Four digits stay together (1500), as that brochure makes customary.
// In the strings below "_" stands for the narrow no-break space (U+202F) and "~" for the no-break space before a unit.
const s = (text: string) => text.replaceAll('_', '\u202F').replaceAll('~', '\u00A0')

describe('formatQuantity: decimals and unit per quantity', () => {
  it('shows frequency error in ppm to three decimals with the Unicode minus', () => {
    expect(formatQuantity(-0.7509333334, 'ppm')).toBe(s('−0.751~ppm'))
    expect(formatQuantity(1.2, 'ppm')).toBe(s('1.200~ppm'))
  })
  it('shows dBm and dB to two decimals and dBc/Hz to one', () => {
    expect(formatQuantity(12.3456, 'dBm')).toBe(s('12.35~dBm'))
    expect(formatQuantity(-3.1, 'dBm')).toBe(s('−3.10~dBm'))
    expect(formatQuantity(41.005, 'dB')).toBe(s('41.01~dB'))
    expect(formatQuantity(-101.44, 'dBc/Hz')).toBe(s('−101.4~dBc/Hz'))
    expect(formatQuantity(-148.96, 'dBc/Hz')).toBe(s('−149.0~dBc/Hz'))
  })
  it('shows jitter, stored in seconds, in femtoseconds (1 fs = 1e-15 s, SI prefix)', () => {
    expect(formatQuantity(2.5e-14, 's')).toBe(s('25.0~fs'))
    expect(formatQuantity(1.2345e-13, 's')).toBe(s('123.5~fs'))
    expect(formatQuantity(1.5e-12, 's')).toBe(s('1500.0~fs'))
    expect(formatQuantity(1.23456e-11, 's')).toBe(s('12_345.6~fs'))
  })
  it('shows supply current in mA to two decimals', () => {
    expect(formatQuantity(52.1, 'mA')).toBe(s('52.10~mA'))
    expect(formatQuantity(412.356, 'mA')).toBe(s('412.36~mA'))
  })
  it('shows frequencies with the prefix their size calls for, to 1 Hz, grouped in threes', () => {
    expect(formatQuantity(375000113.9, 'Hz')).toBe(s('375.000_114~MHz'))
    expect(formatQuantity(374999718.4, 'Hz')).toBe(s('374.999_718~MHz'))
    expect(formatQuantity(3_000_000_123, 'Hz')).toBe(s('3.000_000_123~GHz'))
    expect(formatQuantity(10_000, 'Hz')).toBe(s('10.000~kHz'))
    expect(formatQuantity(999_999.7, 'Hz')).toBe(s('1.000_000~MHz'))
    expect(formatQuantity(0.75, 'Hz')).toBe(s('0.8~Hz'))
  })
  it('gives a unit it does not know four significant digits', () => {
    expect(formatQuantity(3.30125, 'V')).toBe(s('3.301~V'))
    expect(formatQuantity(1234.5, 'V')).toBe(s('1235~V'))
  })
  it('reads a missing or non-finite value as a dash', () => {
    expect(formatQuantity(null, 'dBm')).toBe('—')
    expect(formatQuantity(Number.NaN, 'dBm')).toBe('—')
    expect(formatQuantity(Number.POSITIVE_INFINITY, 'ppm')).toBe('—')
  })
})

describe('formatNumber and formatFixed', () => {
  it('never writes a negative zero', () => {
    expect(formatFixed(-0.0004, 3)).toBe('0.000')
    expect(formatFixed(-0.0006, 3)).toBe('−0.001')
  })
  it('groups the integer part from the right and the fraction from the left', () => {
    expect(formatFixed(1234567.891, 3)).toBe(s('1_234_567.891'))
    expect(formatFixed(-12345.6789, 4)).toBe(s('−12_345.6789'))
    expect(formatFixed(999, 0)).toBe('999')
    expect(formatFixed(1500.25, 2)).toBe('1500.25')
    expect(formatFixed(0.12345, 5)).toBe(s('0.123_45'))
  })
  it('uses one prefix for every number of a row chosen from one of its values', () => {
    const d = displayUnitFor('Hz', 375e6)
    expect(d.unit).toBe('MHz')
    expect(formatNumber(374_990_000, d)).toBe(s('374.990_000'))
    expect(formatNumber(375_010_000, d)).toBe(s('375.010_000'))
  })
  it('writes the sign of a difference', () => {
    const dB = displayUnitFor('dB')
    expect(formatSigned(0.524, dB)).toBe('+0.52')
    expect(formatSigned(-1.1, dB)).toBe('−1.10')
    expect(formatSigned(0.001, dB)).toBe('0.00')
  })
})

describe('indices, intervals and proportions', () => {
  it('writes index intervals with "to" so negative ends stay readable', () => {
    expect(formatIndexInterval([-1.634, -0.926])).toBe('−1.63 to −0.93')
    expect(formatIndexInterval([0.891, 1.409])).toBe('0.89 to 1.41')
    expect(formatIndexInterval(null)).toBe('—')
    expect(formatRange('−3.0', '2.5')).toBe('−3.0 to 2.5')
  })
  it('formats indices, percentages, yields, defect ppm, p-values and counts', () => {
    expect(formatIndex(1.333)).toBe('1.33')
    expect(formatPercent(0.9612)).toBe(s('96.1~%'))
    expect(formatYield({ p: 0.9612, lo: 0.9123, hi: 0.9841 })).toBe(s('96.1~% (91.2 to 98.4~%)'))
    expect(formatDefectPpm(1234.4)).toBe('1234')
    expect(formatDefectPpm(12345.6)).toBe(s('12_346'))
    expect(formatDefectPpm(12.34)).toBe('12.3')
    expect(formatDefectPpm(0.1234)).toBe('0.123')
    expect(formatPValue(0.00002)).toBe('< 0.0001')
    expect(formatPValue(0.04567)).toBe('0.0457')
    expect(formatCount(12345)).toBe(s('12_345'))
  })
})

describe('parameterLabel', () => {
  it('names parameters in words, never by their stored names', () => {
    expect(parameterLabel('phase_noise', 10_000)).toBe('Phase noise @ 10 kHz')
    expect(parameterLabel('harmonic_rejection', 2)).toBe('Harmonic rejection @ H2')
    expect(parameterLabel('output_power', 0)).toBe('Output power')
    expect(parameterLabel('integrated_jitter')).toBe('Integrated jitter')
    expect(parameterLabel('tuning_voltage', null)).toBe('tuning voltage')
  })
})

describe('typed values in the display unit', () => {
  it('takes jitter in fs and stores seconds (1 fs = 1e-15 s)', () => {
    expect(inputUnitFor('s').unit).toBe('fs')
    expect(fromInputUnit(40, 's')).toBe(4e-14)
    expect(fromInputUnit(250, 's')).toBe(2.5e-13)
    expect(fromInputUnit(0.3, 's')).toBe(3e-16)
    expect(toInputUnit(4e-14, 's')).toBe(40)
    expect(toInputUnit(2.5e-13, 's')).toBe(250)
  })
  it('leaves every other unit as typed and null as null', () => {
    expect(fromInputUnit(-2.5, 'ppm')).toBe(-2.5)
    expect(toInputUnit(-101.5, 'dBc/Hz')).toBe(-101.5)
    expect(fromInputUnit(null, 's')).toBe(null)
  })
  it('round-trips every whole number of femtoseconds up to 10 000 exactly', () => {
    for (let fs = 1; fs <= 10_000; fs++) expect(toInputUnit(fromInputUnit(fs, 's'), 's')).toBe(fs)
  })
})

describe('formatLimits', () => {
  it('writes two-sided limits as a range and one-sided ones with ≥ or ≤', () => {
    expect(formatLimits(-2, 2, 'ppm')).toBe(s('−2.000 to 2.000~ppm'))
    expect(formatLimits(7, null, 'dBm')).toBe(s('≥ 7.00~dBm'))
    expect(formatLimits(null, -120, 'dBc/Hz')).toBe(s('≤ −120.0~dBc/Hz'))
    expect(formatLimits(null, 4e-14, 's')).toBe(s('≤ 40.0~fs'))
    expect(formatLimits(374_990_000, 375_010_000, 'Hz')).toBe(s('374.990_000 to 375.010_000~MHz'))
    expect(formatLimits(null, null, 'dB')).toBe('—')
  })
})

describe('formatFigure', () => {
  it('reads stored units in their display unit and leaves other units alone', () => {
    expect(formatFigure(2.5e-14, 's')).toBe(s('25.0~fs'))
    expect(formatFigure(0.0123, 'ppm per unit')).toBe(s('0.012_30~ppm per unit'))
    expect(formatFigure(80, '%')).toBe(s('80~%'))
    expect(formatFigure(12345, null)).toBe(s('12_345'))
    expect(formatFigure(-1.23456, 'σ')).toBe(s('−1.235~σ'))
    expect(formatFigure('frozen baseline')).toBe('frozen baseline')
    expect(formatFigure(null, 'dBm')).toBe('—')
  })
})

describe('formatBytes and formatWait: sizes and waits as people read them', () => {
  it('writes sizes with the binary prefixes of IEC 80000-13 (1 KiB = 1024 B)', () => {
    expect(formatBytes(812)).toBe(s('812~B'))
    expect(formatBytes(1024)).toBe(s('1.0~KiB'))
    expect(formatBytes(3.4 * 1024)).toBe(s('3.4~KiB'))
    expect(formatBytes(71.1 * 1024 ** 2)).toBe(s('71.1~MiB'))
    expect(formatBytes(2 * 1024 ** 3)).toBe(s('2.0~GiB'))
    expect(formatBytes(Number.NaN)).toBe('—')
  })

  it('keeps seconds up to a minute and a half, then rounds up to whole minutes', () => {
    expect(formatWait(0.2)).toBe('1 s')
    expect(formatWait(45)).toBe('45 s')
    expect(formatWait(90)).toBe('90 s')
    expect(formatWait(91)).toBe('2 minutes')
    expect(formatWait(897)).toBe('15 minutes')
  })
})

describe('formatUpperBound: a stated bound rounded up, never down', () => {
  it('keeps two significant digits in the display unit and rounds up', () => {
    // 2^-7 dB = 0.0078125 dB; 1.41e-17 s = 0.0141 fs
    expect(formatUpperBound(2 ** -7, displayUnitFor('dB'))).toBe('0.0079')
    expect(formatUpperBound(1.41e-17, displayUnitFor('s'))).toBe('0.015')
    expect(formatUpperBound(0.25, displayUnitFor('dB'))).toBe('0.25')
    expect(formatUpperBound(null, displayUnitFor('dB'))).toBe('—')
  })
})

import { describe, expect, it } from 'vitest'
import { limitInForce, maskDecision, maskLimitAt, maskLine, maskMarginLimit, traceMaskMargin } from '../../../shared/utils/phase-noise-mask'

// The demo tripler's final-test mask. Between spot offsets the limit is a straight line on a log-frequency axis
// (common practice for phase-noise masks): between 1 kHz (−134) and 10 kHz (−144) it falls 10 dB per decade.
const MASK = [{ offsetHz: 100, usl: -114 }, { offsetHz: 1000, usl: -134 }, { offsetHz: 10_000, usl: -144 }, { offsetHz: 100_000, usl: -149 }, { offsetHz: 1e6, usl: -151 }]

describe('maskLimitAt', () => {
  it('is the spot limit at a spot offset', () => {
    for (const p of MASK) expect(maskLimitAt(MASK, p.offsetHz)).toBe(p.usl)
  })

  it('runs straight on a log-frequency axis between spots', () => {
    // the log midpoint of 1 and 10 kHz (√10 kHz) lies halfway down: −139
    expect(maskLimitAt(MASK, Math.sqrt(1000 * 10_000))).toBeCloseTo(-139, 12)
    // 2 kHz: −134 − 10 dB/decade × log10(2) = −134 − 3.0103 = −137.0103
    expect(maskLimitAt(MASK, 2000)).toBeCloseTo(-137.0103, 4)
    // 300 Hz: −114 − 20 dB/decade × log10(3) = −114 − 9.5424 = −123.5424
    expect(maskLimitAt(MASK, 300)).toBeCloseTo(-123.5424, 4)
    // 500 kHz: −149 − 2 dB/decade × log10(5) = −149 − 1.3979 = −150.3979
    expect(maskLimitAt(MASK, 500_000)).toBeCloseTo(-150.3979, 4)
  })

  it('has no limit beyond the outermost spots: the mask is not extended', () => {
    expect(maskLimitAt(MASK, 99.9)).toBeNull()
    expect(maskLimitAt(MASK, 10)).toBeNull()
    expect(maskLimitAt(MASK, 1.000001e6)).toBeNull()
    expect(maskLimitAt(MASK, 0)).toBeNull()
    expect(maskLimitAt([{ offsetHz: 1000, usl: -134 }], 1000)).toBe(-134)
    expect(maskLimitAt([{ offsetHz: 1000, usl: -134 }], 1001)).toBeNull()
    expect(maskLimitAt([], 1000)).toBeNull()
  })

  it('takes the spots in any order and refuses an offset named twice', () => {
    expect(maskLimitAt([...MASK].reverse(), 2000)).toBeCloseTo(-137.0103, 4)
    expect(() => maskLimitAt([{ offsetHz: 1000, usl: -134 }, { offsetHz: 1000, usl: -130 }], 1000)).toThrow(RangeError)
    expect(() => maskLimitAt([{ offsetHz: -5, usl: -134 }], 1000)).toThrow(RangeError)
  })
})

describe('maskLine', () => {
  it('is the spots in offset order: straight segments between them on a log10 axis are the mask itself', () => {
    expect(maskLine([MASK[2]!, MASK[0]!, MASK[1]!])).toEqual([[100, -114], [1000, -134], [10_000, -144]])
    expect(maskLine([])).toEqual([])
    // any point on a drawn segment (linear in log10 f) is the judged limit
    const [[f1, l1], [f2, l2]] = maskLine(MASK).slice(1, 3) as [number, number][]
    const x = Math.log10(f1) + 0.37 * (Math.log10(f2) - Math.log10(f1))
    expect(l1 + 0.37 * (l2 - l1)).toBeCloseTo(maskLimitAt(MASK, 10 ** x)!, 10)
  })
})

describe('traceMaskMargin', () => {
  it('is 0 dB for a trace lying exactly on the mask', () => {
    const m = traceMaskMargin(MASK, MASK.map((p) => [p.offsetHz, p.usl] as const))!
    expect(m.worstMarginDb).toBeCloseTo(0, 12)
    expect(m.worstOffsetHz).toBe(100)
  })

  it('finds the worst place and how far the trace lies above the mask there', () => {
    // flat at −140 dBc/Hz from 100 Hz to 1 MHz: under the mask up to 10^3.6 Hz, 11 dB above it at 1 MHz
    const trace = [100, 1000, 1e4, 1e5, 1e6].map((f) => [f, -140] as const)
    const m = traceMaskMargin(MASK, trace)!
    expect(m.worstMarginDb).toBeCloseTo(-11, 12)
    expect(m.worstOffsetHz).toBe(1e6)
    expect(m).toMatchObject({ judgedFromHz: 100, judgedToHz: 1e6 })
  })

  it('compares at the mask corners between trace points, where two straight lines can differ most', () => {
    // a coarse trace at 100 Hz and 10 kHz falling 15 dB/decade (−116 → −146) is 2 dB under the mask at both points,
    // but at the 1 kHz corner it reads −131 against a limit of −134: 3 dB over
    const m = traceMaskMargin(MASK, [[100, -116], [10_000, -146]])!
    expect(m.worstMarginDb).toBeCloseTo(-3, 12)
    expect(m.worstOffsetHz).toBe(1000)
    expect(m.points).toBe(3)
  })

  it('judges only the part of the sweep under the mask, and nothing when they do not overlap', () => {
    // the point at 10 Hz lies far above anything but there is no limit there
    const m = traceMaskMargin(MASK, [[10, 0], [100, -120], [1000, -140], [2e6, 0]])!
    expect(m.judgedFromHz).toBe(100)
    expect(m.judgedToHz).toBe(1e6)
    // between 1 kHz and 2 MHz the trace rises from −140 to 0: at the 1 MHz corner it reads −140 + 140·log10(1000)/log10(2000)
    const at1M = -140 + (140 * Math.log10(1000)) / Math.log10(2000)
    expect(m.worstMarginDb).toBeCloseTo(-151 - at1M, 9)
    expect(m.worstOffsetHz).toBe(1e6)
    expect(traceMaskMargin(MASK, [[10, -100], [50, -110]])).toBeNull()
    expect(traceMaskMargin([], [[100, -120]])).toBeNull()
  })

  it('gives a tie to the lowest offset', () => {
    const m = traceMaskMargin(MASK, [[100, -116], [1000, -136], [10_000, -146]])!
    expect(m.worstMarginDb).toBeCloseTo(2, 12)
    expect(m.worstOffsetHz).toBe(100)
  })
})

describe('maskDecision', () => {
  it('is guarded if any spot limit is, with the widest default uncertainty among them', () => {
    expect(maskDecision([{ rule: 'guarded', defaultUncertainty: 1.5 }, { rule: 'simple', defaultUncertainty: 2 }])).toEqual({ rule: 'guarded', defaultUncertainty: 2 })
    expect(maskDecision([{ rule: 'simple', defaultUncertainty: null }, { rule: 'simple', defaultUncertainty: null }])).toEqual({ rule: 'simple', defaultUncertainty: null })
  })
})

describe('the mask margin\'s limit', () => {
  const spec = (name: string, qualifier: number, usl: number | null, rule: 'simple' | 'guarded' = 'guarded', step = 'final') => ({
    step, name, qualifier, lsl: null, usl, target: null, unit: 'dBc/Hz', required: true, rule, defaultUncertainty: 1.5, key: true,
  })
  const limits = [spec('phase_noise', 100, -114), spec('phase_noise', 1000, -134), spec('output_power', 0, 8.5, 'simple'), spec('phase_noise', 1000, -120, 'simple', 'tune')]

  it('fails a sweep only beyond the mask by more than the spots\' guard band (guarded rejection), and is found like any limit', () => {
    expect(maskMarginLimit(limits, 'final')).toMatchObject({ name: 'phase_noise_mask_margin', qualifier: 0, lsl: -1.5, usl: null, unit: 'dB', rule: 'simple', defaultUncertainty: null, required: false })
    expect(maskMarginLimit(limits, 'tune')).toMatchObject({ lsl: -1.5, rule: 'simple' })
    expect(maskMarginLimit([{ ...limits[0]!, defaultUncertainty: null }], 'final')).toMatchObject({ lsl: 0 })
    expect(maskMarginLimit(limits, 'burn-in')).toBeUndefined()
    expect(limitInForce(limits, { step: 'final', name: 'phase_noise_mask_margin', qualifier: 0 })).toMatchObject({ lsl: -1.5 })
    expect(limitInForce(limits, { step: 'final', name: 'output_power', qualifier: 0 })).toBe(limits[2])
    expect(limitInForce(limits, { step: 'final', name: 'supply_current', qualifier: 0 })).toBeUndefined()
  })
})

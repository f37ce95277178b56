import { describe, expect, it } from 'vitest'
import { IMPOSSIBLE_REASONS, impossibleValues, implausibleReason, implausibleTrace, PLAUSIBLE_BOUNDS } from '../../../shared/utils/plausibility'
import { DEMO_PRODUCTS } from '../../../fixtures/demo-catalogue'

const CARRIER = 375e6
const run = (measurements: { name: string; value: number; offsetHz?: number; harmonic?: number; uncertainty?: number }[], extra: Record<string, unknown> = {}) => ({ measurements, ...extra })

describe('impossibleValues', () => {
  it('accepts an ordinary run', () => {
    expect(impossibleValues(run([
      { name: 'output_frequency', value: 375_000_150 }, { name: 'supply_current', value: 78 }, { name: 'integrated_jitter', value: 0 },
      { name: 'phase_noise', offsetHz: 1000, value: -137 }, { name: 'phase_noise', offsetHz: 1e6, value: 0 },
    ], { reference: { frequencyHz: 125e6, phaseNoise: [{ offsetHz: 1000, value: -148 }] }, traces: [{ name: 'phase_noise_sweep', points: [[100, -117], [374e6, -170]] }] }), CARRIER)).toEqual([])
  })

  it('refuses negative jitter (the stored −1e16 fs is −10 s), frequency and current, each at its pointer', () => {
    const p = impossibleValues(run([
      { name: 'output_power', value: -3 }, { name: 'integrated_jitter', value: -1e16 * 1e-15 }, { name: 'output_frequency', value: -375e6 }, { name: 'supply_current', value: -0.5 },
    ]), CARRIER)
    expect(p).toEqual([
      { pointer: '/measurements/1/value', message: IMPOSSIBLE_REASONS.negativeJitter },
      { pointer: '/measurements/2/value', message: IMPOSSIBLE_REASONS.negativeFrequency },
      { pointer: '/measurements/3/value', message: IMPOSSIBLE_REASONS.negativeCurrent },
    ])
  })

  it('refuses phase noise above 0 dBc/Hz in spots, the reference and the sweep; 0 dBc/Hz itself is allowed', () => {
    const p = impossibleValues(run([{ name: 'phase_noise', offsetHz: 100, value: 3 }, { name: 'phase_noise', offsetHz: 1000, value: 0 }], {
      reference: { frequencyHz: 125e6, phaseNoise: [{ offsetHz: 100, value: 0.5 }] },
      traces: [{ name: 'phase_noise_sweep', points: [[100, -117], [200, 1]] }, { name: 'power_sweep', points: [[1e6, 12]] }],
    }), CARRIER)
    expect(p.map((x) => x.pointer)).toEqual(['/measurements/0/value', '/reference/phaseNoise/0/value', '/traces/0/points/1/1'])
    expect(new Set(p.map((x) => x.message))).toEqual(new Set([IMPOSSIBLE_REASONS.phaseNoiseAboveCarrier]))
  })

  it('refuses offsets at or beyond the carrier: the output for spots and sweep, the reference for its own table', () => {
    const p = impossibleValues(run([{ name: 'phase_noise', offsetHz: 375e6, value: -170 }, { name: 'phase_noise', offsetHz: 374.9e6, value: -170 }], {
      reference: { frequencyHz: 125e6, phaseNoise: [{ offsetHz: 200e6, value: -170 }, { offsetHz: 1e6, value: -165 }] },
      traces: [{ name: 'phase_noise_sweep', points: [[1e9, -170]] }],
    }), CARRIER)
    expect(p.map((x) => x.pointer)).toEqual(['/measurements/0/offsetHz', '/reference/phaseNoise/0/offsetHz', '/traces/0/points/0/0'])
    expect(p[0]!.message).toContain(IMPOSSIBLE_REASONS.offsetBeyondCarrier)
  })

  it('refuses numbers that are not finite wherever they stand (JSON 1e400 parses to Infinity)', () => {
    const inf = JSON.parse('1e400') as number
    expect(inf).toBe(Infinity)
    const p = impossibleValues(run([
      { name: 'output_power', value: inf }, { name: 'output_power', value: 7, uncertainty: inf }, { name: 'phase_noise', offsetHz: inf, value: -inf },
      { name: 'harmonic_rejection', harmonic: inf, value: 30 },
    ], { conditions: { temperatureC: inf, supplyV: 5 }, traces: [{ name: 'other', points: [[1, inf]] }], reference: { frequencyHz: inf } }), CARRIER)
    expect(p.map((x) => x.pointer)).toEqual([
      '/measurements/0/value', '/measurements/1/uncertainty', '/measurements/2/offsetHz', '/measurements/2/value', '/measurements/3/harmonic',
      '/reference/frequencyHz', '/traces/0/points/0/1', '/conditions/temperatureC',
    ])
    for (const x of p) expect(x.message).toBe(IMPOSSIBLE_REASONS.nonFinite)
  })
})

describe('implausibleReason', () => {
  it('two-sided limits: more than ten spec widths from their centre', () => {
    // frequency error −2 … +2 ppm: width 4, centre 0, so beyond ±40 ppm
    const ppm = { lsl: -2, usl: 2 }
    expect(implausibleReason('frequency_error', 40, ppm)).toBeNull()
    expect(implausibleReason('frequency_error', -40, ppm)).toBeNull()
    expect(implausibleReason('frequency_error', 40.001, ppm)).toMatch(/10 spec widths/)
    // output power 5.5 … 8.5 dBm: centre 7, width 3, so beyond 37 dBm or below −23 dBm
    expect(implausibleReason('output_power', 37, { lsl: 5.5, usl: 8.5 })).toBeNull()
    expect(implausibleReason('output_power', -23.5, { lsl: 5.5, usl: 8.5 })).not.toBeNull()
    expect(implausibleReason('case_temperature', 1e6, { lsl: 20, usl: 60 })).not.toBeNull()
  })

  it('one-sided quantities: beyond their stated bound, whatever the limit', () => {
    expect(implausibleReason('phase_noise', -200, { lsl: null, usl: -144 })).toBeNull()
    expect(implausibleReason('phase_noise', -200.1, { lsl: null, usl: -144 })).toBe(PLAUSIBLE_BOUNDS.phase_noise!.reason)
    expect(implausibleReason('phase_noise', -250, null)).not.toBeNull()
    expect(implausibleReason('harmonic_rejection', 150, { lsl: 30, usl: null })).toBeNull()
    expect(implausibleReason('harmonic_rejection', 150.5, { lsl: 30, usl: null })).not.toBeNull()
    expect(implausibleReason('integrated_jitter', 1e-6, { lsl: null, usl: 40e-15 })).toBeNull()
    expect(implausibleReason('integrated_jitter', 1.5e-6, { lsl: null, usl: 40e-15 })).not.toBeNull()
    // a station-defined one-sided quantity has no bound to hold it to
    expect(implausibleReason('spur_level', -1e9, { lsl: null, usl: -60 })).toBeNull()
    expect(implausibleReason('toString', -1e9, null)).toBeNull()
  })

  it('the phase-noise bound lies below the thermal floor of every carrier in the catalogue', () => {
    // kT at 290 K with the exact SI Boltzmann constant: −173.98 dBm/Hz; its phase-modulation half is 3 dB lower
    // (common practice), so the floor of a P dBm carrier is −177 − P dBc/Hz
    const ktDbmPerHz = 10 * Math.log10((1.380649e-23 * 290) / 1e-3)
    expect(ktDbmPerHz).toBeCloseTo(-173.98, 2)
    const strongest = Math.max(...DEMO_PRODUCTS.flatMap((p) => p.limits.filter((l) => l.name === 'output_power' && l.usl != null).map((l) => l.usl!)))
    expect(PLAUSIBLE_BOUNDS.phase_noise!.min!).toBeLessThan(ktDbmPerHz - 3 - strongest)
  })

  it('a sweep with a level below the phase-noise bound is not trusted', () => {
    expect(implausibleTrace([[100, -120], [1000, -210]])).toBe(true)
    expect(implausibleTrace([[100, -120], [1000, -199]])).toBe(false)
  })
})

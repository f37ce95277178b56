import { describe, expect, it } from 'vitest'
import { judgeRun, RunRejected } from '../../../server/services/ingest/judge-run'
import { validateRun } from '../../../server/utils/run-validator'
import { normalizeSpecLimit } from '../../../shared/utils/spec-limits'
import { DEMO_PRODUCTS } from '../../../fixtures/demo-catalogue'
import type { ProductInfo, RevisionInForce } from '../../../server/database/repositories/spec-lookup'

// The demo tripler (×3, 125 → 375 MHz) and its approved limits, as the judgement reads them.
const T3 = DEMO_PRODUCTS.find((p) => p.partNumber === 'VFW-T3-375')!
const product: ProductInfo = { id: 1, partNumber: T3.partNumber, name: T3.name, multiplier: 3, inputHz: 125e6, outputHz: 375e6, steps: T3.steps, jitterBand: T3.jitterBand }
const revision: RevisionInForce = { id: 1, revision: 1, effectiveAt: new Date(0), approvedAt: new Date(0), status: 'approved', limits: T3.limits.map((l) => normalizeSpecLimit(l)) }

function body(extra: Record<string, unknown> = {}, measurements?: Record<string, unknown>[]) {
  return {
    id: '6f1c1f3e-4a59-4a57-9d8e-0d7f3c8a2b10', serial: 'J-1', partNumber: T3.partNumber, lot: 'J-LOT', step: 'final',
    startedAt: '2026-12-01T10:00:00Z', finishedAt: '2026-12-01T10:01:30Z',
    measurements: measurements ?? [
      { name: 'output_power', value: 7.0, unit: 'dBm', uncertainty: 0.3 },
      { name: 'output_frequency', value: 375_000_150, unit: 'Hz' },
      { name: 'harmonic_rejection', harmonic: 1, value: 38, unit: 'dB' },
      { name: 'harmonic_rejection', harmonic: 2, value: 33, unit: 'dB' },
      { name: 'harmonic_rejection', harmonic: 4, value: 45, unit: 'dB' },
      { name: 'supply_current', value: 78, unit: 'mA' },
      ...[[100, -117], [1000, -137], [10_000, -147], [100_000, -152], [1e6, -154]].map(([f, v]) => ({ name: 'phase_noise', offsetHz: f, value: v, unit: 'dBc/Hz', uncertainty: 1 })),
    ],
    ...extra,
  }
}

function judgeBody(b: unknown) {
  const v = validateRun(JSON.parse(JSON.stringify(b).replace(/"__INF__"/g, '1e400')))
  if (!v.ok) throw new Error(JSON.stringify(v.errors))
  return judgeRun(v.value, product, revision)
}

function rejection(b: unknown): RunRejected {
  try { judgeBody(b) } catch (e) { if (e instanceof RunRejected) return e; throw e }
  throw new Error('the run was accepted')
}

describe('judgeRun: values that cannot be true', () => {
  it('refuses negative jitter and a non-finite value with pointers, before judging anything', () => {
    const b = body()
    b.measurements.push({ name: 'integrated_jitter', value: -10, unit: 's' })
    b.measurements[0]!.value = '__INF__' as unknown as number
    const e = rejection(b)
    expect(e.errors.map((x) => x.pointer)).toEqual(['/measurements/0/value', '/measurements/11/value'])
  })

  it('refuses a phase-noise spot beyond the output frequency, which the schema alone lets through', () => {
    const b = body()
    b.measurements.push({ name: 'phase_noise', offsetHz: 400e6, value: -170, unit: 'dBc/Hz' })
    expect(rejection(b).errors).toEqual([{ pointer: '/measurements/11/offsetHz', message: expect.stringContaining('375000000 Hz') }])
  })
})

describe('judgeRun: implausible values', () => {
  it('keeps an implausible value, judged, flagged, and the run flagged as a measurement problem', () => {
    const b = body()
    // −2 … +2 ppm is 4 ppm wide: 20 kHz off 375 MHz is 53 ppm, more than ten widths from the centre
    b.measurements[1]!.value = 375_020_000
    b.measurements[3]!.value = 160
    const j = judgeBody(b)
    const ppm = j.measurements.find((m) => m.name === 'frequency_error')!
    expect(ppm).toMatchObject({ implausible: true, verdict: 'fail' })
    expect(j.measurements.find((m) => m.name === 'harmonic_rejection' && m.qualifier === 2)).toMatchObject({ implausible: true, verdict: 'pass' })
    expect(j.measurements.filter((m) => m.implausible)).toHaveLength(2)
    expect(j.measurementIssue).toBe(true)
  })

  it('an ordinary run has nothing implausible and no measurement problem', () => {
    const j = judgeBody(body())
    expect(j.measurements.some((m) => m.implausible)).toBe(false)
    expect(j.measurementIssue).toBe(false)
    expect(j.verdict).toBe('pass')
  })
})

describe('judgeRun: the reference frequency', () => {
  it('accepts an output at N × the measured reference, and flags one beyond the 2 ppm frequency tolerance', () => {
    // the output 375 000 150 Hz is 0.4 ppm off nominal; a reference 50 Hz high (0.4 ppm) explains it exactly
    expect(judgeBody(body({ reference: { frequencyHz: 125_000_050 } })).measurementIssue).toBe(false)
    // a reference at 125.001 MHz expects 375.003 MHz: the output is 7.6 ppm below that
    const off = judgeBody(body({ reference: { frequencyHz: 125_001_000 } }))
    expect(off.measurementIssue).toBe(true)
    // frequency error stays judged against the nominal output
    expect(off.measurements.find((m) => m.name === 'frequency_error')).toMatchObject({ verdict: 'pass' })
    expect(off.measurements.find((m) => m.name === 'frequency_error')!.value).toBeCloseTo(0.4, 9)
  })
})

describe('judgeRun: the phase-noise sweep against the mask', () => {
  // 4 dB under the mask everywhere but at 3162.3 Hz, where it reads −142 + `above`
  const sweep = (above: number) => [[100, -118], [316.23, -128], [1000, -138], [3162.3, -142], [10_000, -148], [100_000, -153], [1e6, -155]]
    .map(([f, l]) => [f, f === 3162.3 ? l + above : l])

  it('derives the worst margin and where it lies, failing only beyond the mask by more than its guard band (1.5 dB)', () => {
    const j = judgeBody(body({ traces: [{ name: 'phase_noise_sweep', points: sweep(0) }] }))
    const m = j.measurements.find((x) => x.name === 'phase_noise_mask_margin')!
    // the mask at 3162.3 Hz is −134 − 10·log10(3.1623) = −139.0000; the trace reads −142 there: 3 dB, the worst place
    expect(m.value).toBeCloseTo(3, 3)
    expect(m.atOffsetHz).toBe(3162.3)
    expect(m).toMatchObject({ derived: true, unit: 'dB', verdict: 'pass', limit: { lsl: -1.5, usl: null, rule: 'simple' } })
    expect(j.verdict).toBe('pass')
  })

  it('a sweep beyond the mask by less than its guard band passes', () => {
    const j = judgeBody(body({ traces: [{ name: 'phase_noise_sweep', points: sweep(4) }] }))
    const m = j.measurements.find((x) => x.name === 'phase_noise_mask_margin')!
    expect(m.value).toBeCloseTo(-1, 3)
    expect(m.verdict).toBe('pass')
    expect(j.verdict).toBe('pass')
  })

  it('a sweep beyond the mask by more than its guard band fails the run', () => {
    const j = judgeBody(body({ traces: [{ name: 'phase_noise_sweep', points: sweep(5) }] }))
    const m = j.measurements.find((x) => x.name === 'phase_noise_mask_margin')!
    expect(m.value).toBeCloseTo(-2, 3)
    expect(m).toMatchObject({ verdict: 'fail', zone: 'outside', atOffsetHz: 3162.3 })
    expect(j.verdict).toBe('fail')
  })
})

import { beforeAll, describe, expect, it } from 'vitest'
import { call, signIn, ROLE_ACCOUNTS } from '../support/http'
import { stationTokens, tripleRun, uniqueSerial } from '../support/stations'

const T3 = stationTokens()['ATE-T3-01']!
const post = (body: unknown) => call('POST', '/api/v1/runs', { body, token: T3 })

let engineer = ''
beforeAll(async () => { engineer = await signIn(ROLE_ACCOUNTS.engineer) })
const get = (path: string) => call('GET', path, { cookie: engineer })

// the demo tripler's final-test phase-noise mask: 100 Hz … 1 MHz, guarded, 1.5 dB default uncertainty
const REFERENCE_PN = [{ offsetHz: 100, value: -128 }, { offsetHz: 1000, value: -148 }, { offsetHz: 10000, value: -158 }, { offsetHz: 100000, value: -163 }, { offsetHz: 1000000, value: -165 }]

describe('values no instrument produces', () => {
  it('are refused with 422, a pointer and a reason each, and nothing of the run is stored', async () => {
    const run = tripleRun()
    run.measurements.push({ name: 'integrated_jitter', value: -1e16 * 1e-15, unit: 's' })
    run.measurements[5] = { name: 'supply_current', value: -4, unit: 'mA' }
    run.measurements[7] = { name: 'phase_noise', offsetHz: 1000, value: 3, unit: 'dBc/Hz', uncertainty: 1 }
    run.measurements[10] = { name: 'phase_noise', offsetHz: 400e6, value: -170, unit: 'dBc/Hz', uncertainty: 1 }
    const r = await post(run)
    expect(r.status).toBe(422)
    expect(r.headers.get('content-type')).toContain('application/problem+json')
    expect(r.body.errors.map((e: any) => e.pointer)).toEqual(['/measurements/5/value', '/measurements/7/value', '/measurements/10/offsetHz', '/measurements/11/value'])
    expect(r.body.errors[3].message).toMatch(/cannot be negative/)
    expect(r.body.errors[1].message).toMatch(/0 dBc\/Hz/)
    expect((await get(`/api/units/${run.serial}`)).status).toBe(404)
  })

  it('a number that overflows to infinity is a 422 at its pointer, not a schema failure', async () => {
    const run = tripleRun()
    const raw = JSON.stringify(run).replace('"value":7,', '"value":1e400,')
    expect(raw).toContain('1e400')
    const r = await call('POST', '/api/v1/runs', { raw, token: T3 })
    expect(r.status).toBe(422)
    expect(r.body.errors).toEqual([{ pointer: '/measurements/0/value', message: expect.stringMatching(/not a finite number/) }])
    expect((await get(`/api/units/${run.serial}`)).status).toBe(404)
  })

  it('in a batch, the impossible run is refused at its own pointer and the others are stored', async () => {
    const good = tripleRun()
    const bad = tripleRun({ traces: [{ name: 'phase_noise_sweep', points: [[100, -117], [1000, 2]] }] })
    const r = await call('POST', '/api/v1/runs/batch', { body: { runs: [good, bad] }, token: T3 })
    expect(r.status).toBe(200)
    expect(r.body.results.map((x: any) => x.status)).toEqual([201, 422])
    expect(r.body.results[1].errors).toEqual([{ pointer: '/runs/1/traces/0/points/1/1', message: expect.stringMatching(/0 dBc\/Hz/) }])
    expect((await get(`/api/units/${good.serial}`)).status).toBe(200)
    expect((await get(`/api/units/${bad.serial}`)).status).toBe(404)
  })
})

describe('implausible values', () => {
  const lot = `T3-PL-${Date.now().toString(36)}`
  let flagged: any

  beforeAll(async () => {
    for (let i = 0; i < 3; i++) expect((await post(tripleRun({ lot }))).status).toBe(201)
    const run = tripleRun({ lot })
    // 160 dB of harmonic rejection is beyond any analyser; −250 dBc/Hz lies under the thermal floor
    run.measurements[3] = { name: 'harmonic_rejection', harmonic: 2, value: 160, unit: 'dB' }
    run.measurements[8] = { name: 'phase_noise', offsetHz: 10000, value: -250, unit: 'dBc/Hz', uncertainty: 1 }
    const r = await post(run)
    expect(r.status).toBe(201)
    flagged = r.body
  })

  it('are stored and judged, flagged each, and the run flagged as a measurement problem', () => {
    const h2 = flagged.measurements.find((m: any) => m.name === 'harmonic_rejection' && m.harmonic === 2)
    expect(h2).toMatchObject({ value: 160, implausible: true, verdict: 'pass' })
    expect(flagged.measurements.find((m: any) => m.name === 'phase_noise' && m.offsetHz === 10000)).toMatchObject({ value: -250, implausible: true })
    expect(flagged.measurements.find((m: any) => m.name === 'output_power')).toMatchObject({ implausible: false })
    expect(flagged.measurementIssue).toBe(true)
  })

  it('are left out of the lot summary\'s n, the parameter charts and the phase-noise percentiles', async () => {
    const summary = (await get(`/api/lots/${lot}/summary`)).body
    const row = (name: string, qualifier: number) => summary.capability.find((c: any) => c.step === 'final' && c.name === name && c.qualifier === qualifier)
    expect(row('output_power', 0).n).toBe(4)
    expect(row('harmonic_rejection', 2).n).toBe(3)
    expect(row('harmonic_rejection', 2).max).toBe(33)
    expect(row('phase_noise', 10000).n).toBe(3)
    const chart = (await get(`/api/lots/${lot}/parameters/harmonic_rejection?step=final&qualifier=2`)).body
    expect(chart.n).toBe(3)
    expect(chart.histogram.counts.reduce((a: number, b: number) => a + b, 0)).toBe(3)
    // the last bar holds 33, the largest plausible value, and ends well short of the implausible 160
    expect(chart.histogram.edges.at(-2)).toBeLessThanOrEqual(33)
    expect(chart.histogram.edges.at(-1)).toBeGreaterThan(33)
    expect(chart.histogram.edges.at(-1)).toBeLessThan(34)
    const pn = (await get(`/api/lots/${lot}/phase-noise?step=final`)).body
    expect(pn.offsets.find((o: any) => o.offsetHz === 10000)).toMatchObject({ n: 3, min: -147 })
  })

  it('the unit page says why the run is flagged', async () => {
    const r = await get(`/api/units/${flagged.serial}`)
    const issues: string[] = r.body.runs[0].rf.issues
    expect(issues.some((t) => /Harmonic rejection @ H2.*150 dB/.test(t))).toBe(true)
    expect(issues.some((t) => /Phase noise @ 10 kHz.*thermal noise floor/.test(t))).toBe(true)
  })
})

describe('the output against N × the measured reference', () => {
  it('agrees when the reference explains the output, and is flagged when it disagrees beyond the spec\'s 2 ppm', async () => {
    // output 375 000 150 Hz: 0.4 ppm above nominal; a reference of 125 000 050 Hz is 0.4 ppm high too
    const fine = await post(tripleRun({ reference: { frequencyHz: 125_000_050 } }))
    expect(fine.status).toBe(201)
    expect(fine.body.measurementIssue).toBe(false)
    // 3 × 125 001 000 Hz = 375 003 000 Hz: the output is 7.6 ppm below what the reference makes
    const off = await post(tripleRun({ reference: { frequencyHz: 125_001_000 } }))
    expect(off.status).toBe(201)
    expect(off.body.measurementIssue).toBe(true)
    // frequency error is still judged against the nominal output, which the unit meets
    expect(off.body.measurements.find((m: any) => m.name === 'frequency_error')).toMatchObject({ verdict: 'pass' })
    expect(off.body.verdict).toBe('pass')

    const unit = (await get(`/api/units/${off.body.serial}`)).body.runs[0].rf
    expect(unit.referenceFrequency).toMatchObject({ referenceHz: 125_001_000, multiplier: 3, expectedHz: 375_003_000, measuredHz: 375_000_150, tolerancePpm: 2, agrees: false })
    expect(unit.referenceFrequency.offsetPpm).toBeCloseTo(((375_000_150 - 375_003_000) / 375_003_000) * 1e6, 9)
    expect(unit.issues.some((t: string) => /ppm from 3 × the reference/.test(t))).toBe(true)
  })
})

describe('a phase-noise sweep against the mask', () => {
  // the mask at 3162.3 Hz (halfway between 1 and 10 kHz on a log axis) is −139 dBc/Hz
  const sweep = (at3k: number): [number, number][] => [[100, -118], [1000, -138], [3162.3, at3k], [10000, -148], [100000, -153], [1000000, -155]]

  it('fails the run when the sweep lies beyond the mask by more than the guard band between two spots', async () => {
    // every spot passes; the sweep reads −136.5 at 3.16 kHz: 2.5 dB over the straight-line mask, beyond its 1.5 dB guard band
    const r = await post(tripleRun({ traces: [{ name: 'phase_noise_sweep', points: sweep(-136.5) }] }))
    expect(r.status).toBe(201)
    expect(r.body.measurements.filter((m: any) => m.name === 'phase_noise').every((m: any) => m.verdict === 'pass')).toBe(true)
    const margin = r.body.measurements.find((m: any) => m.name === 'phase_noise_mask_margin')
    expect(margin).toMatchObject({ derived: true, unit: 'dB', verdict: 'fail', zone: 'outside', atOffsetHz: 3162.3, limit: { lsl: -1.5, usl: null, rule: 'simple' } })
    expect(margin.value).toBeCloseTo(-139.0000 - -136.5, 3)
    expect(r.body.verdict).toBe('fail')
    // stored and shown like any measurement
    const unit = (await get(`/api/units/${r.body.serial}`)).body.runs[0]
    expect(unit.measurements.find((m: any) => m.name === 'phase_noise_mask_margin')).toMatchObject({ verdict: 'fail', atOffsetHz: 3162.3 })
  })

  it('passes a sweep over the mask by less than the guard band: only a sweep beyond it by more fails', async () => {
    // −138 at 3.16 kHz: 1 dB over the mask, inside its 1.5 dB guard band
    const r = await post(tripleRun({ traces: [{ name: 'phase_noise_sweep', points: sweep(-138) }] }))
    const margin = r.body.measurements.find((m: any) => m.name === 'phase_noise_mask_margin')
    expect(margin.value).toBeCloseTo(-1, 3)
    expect(margin).toMatchObject({ verdict: 'pass', atOffsetHz: 3162.3 })
    expect(r.body.verdict).toBe('pass')
  })

  it('passes a sweep under the mask by more than the guard band, and counts the margin in the lot statistics', async () => {
    const lot = `T3-MK-${Date.now().toString(36)}`
    const r = await post(tripleRun({ lot, traces: [{ name: 'phase_noise_sweep', points: sweep(-142) }] }))
    const margin = r.body.measurements.find((m: any) => m.name === 'phase_noise_mask_margin')
    expect(margin.value).toBeCloseTo(3, 3)
    expect(margin).toMatchObject({ verdict: 'pass', atOffsetHz: 3162.3 })
    expect(r.body.verdict).toBe('pass')
    const summary = (await get(`/api/lots/${lot}/summary`)).body
    expect(summary.capability.find((c: any) => c.name === 'phase_noise_mask_margin')).toMatchObject({ n: 1, unit: 'dB', lsl: -1.5 })
  })
})

describe('the RF checks of a unit', () => {
  it('show per offset the measured level, the reference + 20·log10(3) and the excess, and harmonic k at k × 125 MHz', async () => {
    const serial = uniqueSerial('RF')
    expect((await post(tripleRun({ serial, reference: { frequencyHz: 125_000_050, phaseNoise: REFERENCE_PN } }))).status).toBe(201)
    const rf = (await get(`/api/units/${serial}`)).body.runs[0].rf
    // ×3 raises phase noise by 20·log10(3) = 9.54 dB (common practice)
    expect(rf.penaltyDb).toBeCloseTo(9.5424, 4)
    const at1k = rf.phaseNoise.find((p: any) => p.offsetHz === 1000)
    expect(at1k).toMatchObject({ measured: -137, reference: -148, quieterThanIdeal: false })
    expect(at1k.expected).toBeCloseTo(-148 + 9.5424, 4)
    expect(at1k.excessDb).toBeCloseTo(-137 - (-148 + 9.5424), 4)
    expect(rf.harmonics.map((h: any) => [h.harmonic, h.frequencyHz, h.rejectionDb, h.lsl, h.verdict])).toEqual([
      [1, 125e6, 38, 30, 'pass'], [2, 250e6, 33, 28, 'pass'], [4, 500e6, 45, 35, 'pass'],
    ])
    expect(rf.referenceFrequency).toMatchObject({ agrees: true })
    expect(rf.issues).toEqual([])
  })
})

import { randomUUID } from 'node:crypto'
import { beforeAll, describe, expect, it } from 'vitest'
import { call, signIn, ROLE_ACCOUNTS } from '../support/http'
import { stationTokens, tripleRun, uniqueSerial } from '../support/stations'

const T3 = stationTokens()['ATE-T3-01']!
const post = (body: unknown) => call('POST', '/api/v1/runs', { body, token: T3 })

const MIN = 60_000
const at = (minutesAgo: number, durationS = 60) => {
  const start = Date.now() - minutesAgo * MIN
  return { startedAt: new Date(start).toISOString(), finishedAt: new Date(start + durationS * 1000).toISOString() }
}

function sweep(): [number, number][] {
  const pts: [number, number][] = []
  for (let i = 0; i <= 20; i++) {
    const f = 100 * 10 ** (i / 5)
    pts.push([Math.round(f * 100) / 100, -117 - 10 * Math.log10(f / 100)])
  }
  return pts
}

let engineer = ''
let operator = ''
let customer = ''

beforeAll(async () => {
  engineer = await signIn(ROLE_ACCOUNTS.engineer)
  operator = await signIn(ROLE_ACCOUNTS.operator)
  customer = await signIn(ROLE_ACCOUNTS.customer)
})

describe('GET /api/units/:serial', () => {
  const serial = uniqueSerial('UT')
  const lot = uniqueSerial('T3U')
  const ids = { tune: randomUUID(), burn: randomUUID(), final1: randomUUID(), final2: randomUUID() }

  beforeAll(async () => {
    // posted out of time order: the unit view orders by start time, attempts follow arrival per step
    const burn = await post({
      id: ids.burn, serial, partNumber: 'VFW-T3-375', lot, step: 'burn-in', ...at(300), stationVerdict: 'pass',
      measurements: [{ name: 'output_power', value: 7.1, unit: 'dBm' }, { name: 'supply_current', value: 80, unit: 'mA' }],
    })
    expect(burn.status).toBe(201)
    const tune = await post({
      id: ids.tune, serial, partNumber: 'VFW-T3-375', lot, step: 'tune', ...at(400), stationVerdict: 'pass',
      measurements: [{ name: 'output_power', value: 6.9, unit: 'dBm' }],
    })
    expect(tune.status).toBe(201)
    const failing = tripleRun({ id: ids.final1, serial, lot, ...at(200, 90), stationVerdict: 'pass', traces: [{ name: 'phase_noise_sweep', points: sweep() }] })
    failing.measurements = failing.measurements.map((m) => (m.name === 'output_power' ? { ...m, value: 9.2 } : m))
    expect((await post(failing)).status).toBe(201)
    const retest = tripleRun({ id: ids.final2, serial, lot, ...at(100, 90) })
    retest.measurements = retest.measurements.map((m) => (m.name === 'harmonic_rejection' && m.harmonic === 1 ? { ...m, value: 30.5, uncertainty: 0.8 } : m))
    expect((await post(retest)).status).toBe(201)
  })

  it('returns the unit and every run oldest first, with attempts per step', async () => {
    const r = await call('GET', `/api/units/${serial}`, { cookie: engineer })
    expect(r.status).toBe(200)
    expect(r.body.unit).toMatchObject({ serial, partNumber: 'VFW-T3-375', productName: 'Tripler 125 → 375 MHz', lot })
    expect(Number.isNaN(Date.parse(r.body.unit.createdAt))).toBe(false)
    expect(r.body.runs.map((x: any) => x.id)).toEqual([ids.tune, ids.burn, ids.final1, ids.final2])
    expect(r.body.runs.map((x: any) => [x.step, x.attempt])).toEqual([['tune', 1], ['burn-in', 1], ['final', 1], ['final', 2]])
    const [, , first, second] = r.body.runs
    expect(first).toMatchObject({ verdict: 'fail', stationVerdict: 'pass', verdictDisagrees: true, station: 'ATE-T3-01', revision: 1 })
    expect(second).toMatchObject({ verdict: 'pass', stationVerdict: 'pass', verdictDisagrees: false })
    for (const run of r.body.runs) expect(Date.parse(run.receivedAt)).toBeGreaterThanOrEqual(Date.parse(run.finishedAt))
  })

  it('carries measurements with the limits they were judged against', async () => {
    const r = await call('GET', `/api/units/${serial}`, { cookie: operator })
    expect(r.status).toBe(200)
    const first = r.body.runs[2]
    const power = first.measurements.find((m: any) => m.name === 'output_power')
    expect(power).toMatchObject({ value: 9.2, unit: 'dBm', uncertainty: 0.3, verdict: 'fail', limit: { lsl: 5.5, usl: 8.5, target: 7, rule: 'guarded', guardBand: 0.3 } })
    const pn = first.measurements.find((m: any) => m.name === 'phase_noise' && m.offsetHz === 1000)
    expect(pn).toMatchObject({ value: -137, unit: 'dBc/Hz', verdict: 'pass', limit: { usl: -134, lsl: null } })
    const jitter = first.measurements.find((m: any) => m.name === 'integrated_jitter')
    expect(jitter).toMatchObject({ derived: true, unit: 's' })
    const h1 = r.body.runs[3].measurements.find((m: any) => m.name === 'harmonic_rejection' && m.harmonic === 1)
    expect(h1).toMatchObject({ verdict: 'pass', zone: 'guard', limit: { lsl: 30, rule: 'simple' } })
  })

  it('includes traces with their points, and the phase-noise limit mask of the run', async () => {
    const r = await call('GET', `/api/units/${serial}`, { cookie: engineer })
    const [tune, , first, second] = r.body.runs
    expect(first.traces).toEqual([{ name: 'phase_noise_sweep', points: sweep() }])
    expect(second.traces).toEqual([])
    expect(first.phaseNoiseMask).toEqual([
      { offsetHz: 100, usl: -114 }, { offsetHz: 1000, usl: -134 }, { offsetHz: 10000, usl: -144 },
      { offsetHz: 100000, usl: -149 }, { offsetHz: 1000000, usl: -151 },
    ])
    expect(tune.phaseNoiseMask).toEqual([])
  })

  it('names the required measurements a run lacked', async () => {
    const s = uniqueSerial('UT')
    const run = tripleRun({ serial: s, lot })
    run.measurements = run.measurements.filter((m) => !(m.name === 'phase_noise' && m.offsetHz === 10000))
    expect((await post(run)).status).toBe(201)
    const r = await call('GET', `/api/units/${s}`, { cookie: engineer })
    expect(r.body.runs[0]).toMatchObject({ incomplete: true, verdict: 'fail', missingRequired: [{ name: 'phase_noise', offsetHz: 10000 }] })
    // the mask is the revision's, spot missing or not: a sweep is judged against every spot limit
    expect(r.body.runs[0].phaseNoiseMask.map((p: any) => p.offsetHz)).toEqual([100, 1000, 10000, 100000, 1000000])
  })
})

describe('a serial shared by two parts', () => {
  const serial = uniqueSerial('SH')
  const d2Lot = uniqueSerial('D2U')
  const t3Lot = uniqueSerial('T3U')

  beforeAll(async () => {
    const d2 = await post({
      id: randomUUID(), serial, partNumber: 'VFW-D2-250', lot: d2Lot, step: 'tune', ...at(50), stationVerdict: 'pass',
      measurements: [{ name: 'output_power', value: 10.1, unit: 'dBm' }],
    })
    expect(d2.status).toBe(201)
    expect((await post(tripleRun({ serial, lot: t3Lot }))).status).toBe(201)
  })

  it('is a 409 listing both parts without ?part', async () => {
    const r = await call('GET', `/api/units/${serial}`, { cookie: engineer })
    expect(r.status).toBe(409)
    expect(r.headers.get('content-type')).toContain('application/problem+json')
    expect(r.body.parts).toEqual(['VFW-D2-250', 'VFW-T3-375'])
  })

  it('answers 200 for the part chosen with ?part, and 404 for a part it is not under', async () => {
    const d2 = await call('GET', `/api/units/${serial}?part=VFW-D2-250`, { cookie: engineer })
    expect(d2.status).toBe(200)
    expect(d2.body.unit).toMatchObject({ serial, partNumber: 'VFW-D2-250', lot: d2Lot })
    expect(d2.body.runs.map((x: any) => x.step)).toEqual(['tune'])
    const t3 = await call('GET', `/api/units/${serial}?part=VFW-T3-375`, { cookie: engineer })
    expect(t3.status).toBe(200)
    expect(t3.body.unit.lot).toBe(t3Lot)
    expect((await call('GET', `/api/units/${serial}?part=VFW-X8-12G`, { cookie: engineer })).status).toBe(404)
  })
})

describe('refusals', () => {
  it('an unknown serial is a 404 problem', async () => {
    const r = await call('GET', `/api/units/${uniqueSerial('NONE')}`, { cookie: engineer })
    expect(r.status).toBe(404)
    expect(r.headers.get('content-type')).toContain('application/problem+json')
  })

  it('a repeated ?part is a 400', async () => {
    const r = await call('GET', '/api/units/ANY-1?part=A&part=B', { cookie: engineer })
    expect(r.status).toBe(400)
  })

  it('customers may not read unit histories, even of a unit that exists', async () => {
    const run = tripleRun()
    expect((await post(run)).status).toBe(201)
    expect((await call('GET', `/api/units/${run.serial}`, { cookie: customer })).status).toBe(403)
    expect((await call('GET', `/api/units/${run.serial}`, { cookie: operator })).status).toBe(200)
  })

  it('unit histories need a sign-in', async () => {
    expect((await call('GET', '/api/units/ANY-1')).status).toBe(401)
  })
})

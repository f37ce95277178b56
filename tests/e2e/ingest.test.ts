import { spawn } from 'node:child_process'
import { resolve } from 'node:path'
import { describe, expect, it } from 'vitest'
import { call, ROLE_ACCOUNTS, signIn } from '../support/http'
import { stationTokens, tripleRun, uniqueSerial } from '../support/stations'

const tokens = stationTokens()
const T3 = tokens['ATE-T3-01']!
// the demo's ×8 station holds a power sensor whose calibration lapsed three days ago
const LAPSED_STATION = tokens['ATE-X8-01']!

const post = (body: unknown, token = T3) => call('POST', '/api/v1/runs', { body, token })

describe('POST /api/v1/runs', () => {
  it('stores a run (201) and answers a replay with the same result (200) without writing twice', async () => {
    const run = tripleRun()
    const first = await post(run)
    expect(first.status).toBe(201)
    expect(first.body).toMatchObject({ id: run.id, serial: run.serial, attempt: 1, verdict: 'pass', station: 'ATE-T3-01', revision: 1 })
    const power = first.body.measurements.find((m: any) => m.name === 'output_power')
    expect(power.limit).toMatchObject({ lsl: 5.5, usl: 8.5, rule: 'guarded', guardBand: 0.3 })
    expect(power.verdict).toBe('pass')

    const second = await post(run)
    expect(second.status).toBe(200)
    expect(second.body).toEqual(first.body)

    const reordered = Object.fromEntries(Object.entries(run).reverse())
    expect((await post(reordered)).status).toBe(200)
  })

  it('a second run of the same unit and step is attempt 2', async () => {
    const run = tripleRun()
    await post(run)
    const retest = await post({ ...tripleRun(), serial: run.serial })
    expect(retest.status).toBe(201)
    expect(retest.body.attempt).toBe(2)
  })

  it('same id with a different body is a 409', async () => {
    const run = tripleRun()
    expect((await post(run)).status).toBe(201)
    const changed = { ...run, measurements: [...run.measurements.slice(1)] }
    const r = await post(changed)
    expect(r.status).toBe(409)
    expect(r.headers.get('content-type')).toContain('application/problem+json')
  })

  it('a 409 leaves nothing behind: the unit it would have created is rolled back with the refused run', async () => {
    const run = tripleRun()
    expect((await post(run)).status).toBe(201)
    // the new serial's unit is created before the run insert meets the stored id, in the same transaction
    const other = { ...run, serial: uniqueSerial('RB') }
    expect((await post(other)).status).toBe(409)
    const engineer = await signIn(ROLE_ACCOUNTS.engineer)
    expect((await call('GET', `/api/units/${other.serial}`, { cookie: engineer })).status).toBe(404)
    expect((await call('GET', `/api/units/${run.serial}`, { cookie: engineer })).status).toBe(200)
  })

  it('derives frequency error in ppm from the output frequency (ppm against N × nominal)', async () => {
    const r = await post(tripleRun())
    const ppm = r.body.measurements.find((m: any) => m.name === 'frequency_error')
    // (375 000 150 − 375 000 000) / 375 000 000 × 1e6 = 0.4 ppm
    expect(ppm.derived).toBe(true)
    expect(ppm.value).toBeCloseTo(0.4, 9)
    expect(ppm.verdict).toBe('pass')
  })

  it('derives integrated jitter from the phase-noise points over the band, and the multiplication excess', async () => {
    const reference = { frequencyHz: 125e6, phaseNoise: [{ offsetHz: 100, value: -128 }, { offsetHz: 1000, value: -148 }, { offsetHz: 10000, value: -158 }, { offsetHz: 100000, value: -163 }, { offsetHz: 1000000, value: -165 }] }
    const r = await post(tripleRun({ reference }))
    expect(r.status).toBe(201)
    const jitter = r.body.measurements.find((m: any) => m.name === 'integrated_jitter')
    expect(jitter.derived).toBe(true)
    expect(jitter.unit).toBe('s')
    expect(jitter.value).toBeGreaterThan(1e-15)
    expect(jitter.value).toBeLessThan(1e-13)
    const pn = r.body.measurements.find((m: any) => m.name === 'phase_noise' && m.offsetHz === 1000)
    // ×3 raises phase noise by 20·log10(3) = 9.54 dB (common practice): −148 + 9.54 = −138.46; −137 − (−138.46) = 1.46 dB
    expect(pn.excessDb).toBeCloseTo(-137 - (-148 + 20 * Math.log10(3)), 9)
    expect(r.body.measurementIssue).toBe(false)
  })

  it('flags a result quieter than the ideal multiplied reference as a measurement problem', async () => {
    const reference = { frequencyHz: 125e6, phaseNoise: [{ offsetHz: 1000, value: -140 }] }
    const r = await post(tripleRun({ reference }))
    // ideal at 1 kHz is −140 + 9.54 = −130.46; measured −137 is 6.5 dB below it, beyond its 1 dB uncertainty
    expect(r.body.measurementIssue).toBe(true)
  })

  it('fails a run that lacks a required measurement, naming it', async () => {
    const run = tripleRun()
    run.measurements = run.measurements.filter((m) => !(m.name === 'harmonic_rejection' && m.harmonic === 2))
    const r = await post(run)
    expect(r.status).toBe(201)
    expect(r.body.verdict).toBe('fail')
    expect(r.body.incomplete).toBe(true)
    expect(r.body.missingRequired).toEqual([{ name: 'harmonic_rejection', harmonic: 2 }])
    expect(r.body.verdictDisagrees).toBe(true)
  })

  it('guarded acceptance fails a value inside the limits but within U of one (ILAC-G8:09/2019 §4.2.2)', async () => {
    const run = tripleRun()
    run.measurements[0] = { name: 'output_power', value: 8.4, unit: 'dBm', uncertainty: 0.3 }
    const r = await post(run)
    const power = r.body.measurements[0]
    expect(power.verdict).toBe('fail')
    expect(power.zone).toBe('guard')
    expect(r.body.verdict).toBe('fail')
  })

  it('keeps measurements with no limit as info', async () => {
    const run = tripleRun()
    run.measurements.push({ name: 'case_temperature', value: 41.2, unit: 'degC' })
    const r = await post(run)
    const extra = r.body.measurements.find((m: any) => m.name === 'case_temperature')
    expect(extra.verdict).toBe('info')
    expect(extra.limit).toBeNull()
  })

  it('flags a run from a station whose instrument calibration had lapsed', async () => {
    const lapsed = await post(tripleRun({ lot: 'T3-E2E-LAPSE' }), LAPSED_STATION)
    expect(lapsed.body.calibrationLapsed).toBe(true)
    const fine = await post(tripleRun(), T3)
    expect(fine.body.calibrationLapsed).toBe(false)
  })

  it('schema failures are 400 with JSON pointers, all at once', async () => {
    const r = await post({ ...tripleRun(), id: 'not-a-uuid', serial: 'has space' })
    expect(r.status).toBe(400)
    expect(r.body.errors.map((e: any) => e.pointer).sort()).toEqual(['/id', '/serial'])
  })

  it('unknown part, wrong unit, finish before start, future finish → 422', async () => {
    expect((await post(tripleRun({ partNumber: 'NO-SUCH-PART' }))).status).toBe(422)
    const wrongUnit = tripleRun()
    wrongUnit.measurements[0] = { name: 'output_power', value: 0.005, unit: 'W' }
    const u = await post(wrongUnit)
    expect(u.status).toBe(422)
    expect(u.body.errors[0].pointer).toBe('/measurements/0/unit')
    const now = Date.now()
    const backwards = await post(tripleRun({ startedAt: new Date(now - 1000).toISOString(), finishedAt: new Date(now - 5000).toISOString() }))
    expect(backwards.status).toBe(422)
    expect(backwards.body.errors[0].pointer).toBe('/finishedAt')
    const future = await post(tripleRun({ startedAt: new Date(now).toISOString(), finishedAt: new Date(now + 10 * 60_000).toISOString() }))
    expect(future.status).toBe(422)
  })

  it('a lot of another part is a 422 and nothing is written', async () => {
    const run = tripleRun({ lot: 'D2-2611-A' })
    expect((await post(run)).status).toBe(422)
    const again = await post({ ...run, lot: 'T3-E2E-01' })
    expect(again.status).toBe(201)
    expect(again.body.attempt).toBe(1)
  })

  it('missing, malformed or revoked tokens are 401', async () => {
    expect((await call('POST', '/api/v1/runs', { body: tripleRun() })).status).toBe(401)
    expect((await call('POST', '/api/v1/runs', { body: tripleRun(), headers: { authorization: 'Basic abc' } })).status).toBe(401)
    expect((await post(tripleRun(), 'tst_' + 'x'.repeat(43))).status).toBe(401)
  })

  it('a body over 1 MiB is a 413', async () => {
    const r = await call('POST', '/api/v1/runs', { token: T3, raw: JSON.stringify({ ...tripleRun(), operator: 'x'.repeat(1024 * 1024) }) })
    expect(r.status).toBe(413)
  })

  it('invalid JSON is a 400', async () => {
    const r = await call('POST', '/api/v1/runs', { token: T3, raw: '{"id": ' })
    expect(r.status).toBe(400)
  })
})

describe('POST /api/v1/runs/batch', () => {
  it('answers each run as the single endpoint would, in order, and bad runs do not stop good ones', async () => {
    const good = tripleRun()
    const replayed = tripleRun()
    await post(replayed)
    const bad = { ...tripleRun(), id: 'nope' }
    const unknown = tripleRun({ partNumber: 'NO-SUCH-PART' })
    const r = await call('POST', '/api/v1/runs/batch', { token: T3, body: { runs: [good, bad, replayed, unknown] } })
    expect(r.status).toBe(200)
    expect(r.body.results.map((x: any) => x.status)).toEqual([201, 400, 200, 422])
    expect(r.body.results[0].run.serial).toBe(good.serial)
    expect(r.body.results[1].errors[0].pointer).toBe('/runs/1/id')
  })

  it('rejects an empty or oversized batch', async () => {
    expect((await call('POST', '/api/v1/runs/batch', { token: T3, body: { runs: [] } })).status).toBe(400)
    expect((await call('POST', '/api/v1/runs/batch', { token: T3, body: { runs: Array.from({ length: 501 }, () => ({})) } })).status).toBe(400)
  })
})

describe('station reads', () => {
  it('serves the run schema it validates with', async () => {
    const r = await call('GET', '/api/v1/schema/run.json')
    expect(r.status).toBe(200)
    expect(r.body.$schema).toBe('https://json-schema.org/draft/2020-12/schema')
    expect(r.body.required).toContain('measurements')
  })

  it('lists products and the spec in force to a station token', async () => {
    const products = await call('GET', '/api/products', { token: T3 })
    expect(products.status).toBe(200)
    const tripler = products.body.products.find((p: any) => p.partNumber === 'VFW-T3-375')
    expect(tripler).toMatchObject({ multiplier: 3, inputHz: 125e6, outputHz: 375e6, revisionInForce: 1 })
    const spec = await call('GET', '/api/products/VFW-T3-375/spec', { token: T3 })
    expect(spec.body.limits).toContainEqual(expect.objectContaining({ step: 'final', name: 'phase_noise', offsetHz: 1000, usl: -134, unit: 'dBc/Hz', decisionRule: 'guarded' }))
    expect((await call('GET', '/api/products/NOPE/spec', { token: T3 })).status).toBe(404)
  })
})

describe('database unavailable', () => {
  it('answers 503 with Retry-After', async () => {
    const port = 39000 + Math.floor(Math.random() * 1000)
    const child = spawn(process.execPath, [resolve(process.cwd(), process.env.TERCET_OUTPUT_DIR || '.output', 'server/index.mjs')], {
      env: { ...process.env, PORT: String(port), HOST: '127.0.0.1', NUXT_DB_PORT: '1' }, stdio: 'ignore',
    })
    try {
      let r: Response | undefined
      for (let i = 0; i < 100 && !r; i++) {
        try { r = await fetch(`http://127.0.0.1:${port}/api/v1/runs`, { method: 'POST', headers: { authorization: `Bearer ${T3}`, 'content-type': 'application/json' }, body: JSON.stringify(tripleRun()) }) } catch { await new Promise((x) => setTimeout(x, 100)) }
      }
      expect(r!.status).toBe(503)
      expect(Number(r!.headers.get('retry-after'))).toBeGreaterThan(0)
    } finally {
      child.kill('SIGTERM')
    }
  })
})

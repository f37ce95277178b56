// The plant's time zone is one setting: anyone reads it (pages show times on its clock), an administrator changes it
// to a zone name the server knows (audited); the floor opens an arriving run with its failing parameters.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { call, signIn, ROLE_ACCOUNTS } from '../support/http'
import { stationTokens, tripleRun } from '../support/stations'

let admin = ''
let operator = ''
beforeAll(async () => {
  admin = await signIn(ROLE_ACCOUNTS.admin)
  operator = await signIn(ROLE_ACCOUNTS.operator)
})
afterAll(async () => {
  await call('PUT', '/api/settings/plant-time-zone', { cookie: admin, body: { zone: 'Europe/Berlin' } })
})

describe('the plant time zone', () => {
  it('is the demo plant\'s Europe/Berlin, readable without signing in and listed with the settings', async () => {
    const open = await call('GET', '/api/plant-time')
    expect(open.status).toBe(200)
    expect(open.body).toEqual({ zone: 'Europe/Berlin' })
    const settings = await call('GET', '/api/settings', { cookie: operator })
    expect(settings.body.plantTimeZone.value).toBe('Europe/Berlin')
  })

  it('is changed by an administrator to a known IANA name, stored in its canonical spelling and audited', async () => {
    const set = await call('PUT', '/api/settings/plant-time-zone', { cookie: admin, body: { zone: 'america/new_york' } })
    expect(set.status, JSON.stringify(set.body)).toBe(200)
    expect(set.body.plantTimeZone).toMatchObject({ value: 'America/New_York', updatedBy: expect.any(String) })
    expect((await call('GET', '/api/plant-time')).body.zone).toBe('America/New_York')
    const audit = await call('GET', '/api/audit?entity=app_setting&entityId=plant_time_zone', { cookie: admin })
    expect(JSON.stringify(audit.body)).toContain('"zone":"America/New_York"')
  })

  it('refuses a name that is no time zone (422, pointer /zone) or no string (400) and keeps the zone in force', async () => {
    const unknown = await call('PUT', '/api/settings/plant-time-zone', { cookie: admin, body: { zone: 'Mars/Olympus_Mons' } })
    expect(unknown.status).toBe(422)
    expect(unknown.headers.get('content-type')).toContain('application/problem+json')
    expect(unknown.body.errors[0].pointer).toBe('/zone')
    for (const body of [{ zone: '' }, { zone: 5 }, {}, { zone: 'UTC', extra: 1 }]) {
      const r = await call('PUT', '/api/settings/plant-time-zone', { cookie: admin, body })
      expect(r.status, JSON.stringify(body)).toBe(400)
    }
    expect((await call('GET', '/api/plant-time')).body.zone).toBe('America/New_York')
  })
})

describe('a run opened from the floor', () => {
  it('names its failing parameters with values and limits, and the feed gives arrival and test time', async () => {
    const startedAt = new Date(Date.now() - 3 * 3_600_000).toISOString()
    const run = tripleRun({ startedAt, finishedAt: new Date(Date.parse(startedAt) + 90_000).toISOString(), stationVerdict: 'fail' })
    // the demo tripler's final step: output power 5.5–8.5 dBm (guarded by 0.3 dB), supply current 55–100 mA
    run.measurements = run.measurements.map((m) => m.name === 'output_power' ? { ...m, value: 4.2 } : m.name === 'supply_current' ? { ...m, value: 112 } : m)
    const posted = await call('POST', '/api/v1/runs', { body: run, token: stationTokens()['ATE-T3-01']! })
    expect(posted.status, JSON.stringify(posted.body)).toBe(201)

    const snapshot = await call('GET', '/api/floor/snapshot', { cookie: operator })
    const entry = snapshot.body.recent.find((r: any) => r.serial === run.serial)
    expect(entry).toMatchObject({ verdict: 'fail', failed: 2, startedAt: new Date(startedAt).toISOString() })
    expect(Date.parse(entry.receivedAt) - Date.parse(entry.startedAt)).toBeGreaterThan(2 * 3_600_000)

    const detail = await call('GET', `/api/floor/runs/${entry.id}`, { cookie: operator })
    expect(detail.status).toBe(200)
    expect(detail.body).toMatchObject({ serial: run.serial, partNumber: 'VFW-T3-375', station: 'ATE-T3-01', verdict: 'fail', failing: expect.any(Array) })
    const byName = Object.fromEntries(detail.body.failing.map((p: any) => [p.name, p]))
    expect(Object.keys(byName).sort()).toEqual(['output_power', 'supply_current'])
    expect(byName.output_power).toMatchObject({ value: 4.2, lsl: 5.5, usl: 8.5, unit: 'dBm', zone: 'outside' })
    expect(byName.supply_current).toMatchObject({ value: 112, lsl: 55, usl: 100, unit: 'mA' })
    expect(detail.body.measured).toBeGreaterThanOrEqual(run.measurements.length)

    expect((await call('GET', '/api/floor/runs/999999999', { cookie: operator })).status).toBe(404)
    expect((await call('GET', '/api/floor/runs/abc', { cookie: operator })).status).toBe(404)
  })
})

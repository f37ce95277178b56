// The due-soon period is one setting in the database: staff read it, an administrator changes it (audited), and
// the station badges follow it at once.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { call, signIn, ROLE_ACCOUNTS } from '../support/http'

const DAY = 86_400_000
const tag = Date.now().toString(36).toUpperCase()
let admin = ''
let engineer = ''
let stationId = 0
const day = (daysAhead: number) => new Date(Date.now() + daysAhead * DAY).toISOString().slice(0, 10)
const badge = async () => (await call('GET', `/api/stations/${stationId}`, { cookie: engineer })).body.station.calibrationState

beforeAll(async () => {
  admin = await signIn(ROLE_ACCOUNTS.admin)
  engineer = await signIn(ROLE_ACCOUNTS.engineer)
  const station = await call('POST', '/api/stations', { cookie: engineer, body: { name: `E2E-SOON-${tag}` } })
  stationId = station.body.station.id
  const instrument = await call('POST', '/api/instruments', {
    cookie: engineer, body: { assetNumber: `SOON-${tag}`, kind: 'Power sensor', model: 'PS-18', serial: `S-${tag}`, stationId, installedAt: new Date(Date.now() - 20 * DAY).toISOString() },
  })
  expect(instrument.status, JSON.stringify(instrument.body)).toBe(201)
  // due in 40 days: outside a 30-day period, inside a 45-day one
  const rec = await call('POST', `/api/instruments/${instrument.body.instrument.id}/calibrations`, {
    cookie: engineer, body: { certificateNumber: `SOON-${tag}`, laboratory: 'Invented Metrology Lab', asFound: 'in_tolerance', calibratedOn: day(-300), dueAt: day(40) },
  })
  expect(rec.status, JSON.stringify(rec.body)).toBe(201)
})
afterAll(async () => {
  await call('PUT', '/api/settings/calibration-due-soon-days', { cookie: admin, body: { days: 30 } })
})

describe('the calibration due-soon setting', () => {
  it('is read by staff and changed by an administrator; the station badge follows it and the change is audited', async () => {
    const read = await call('GET', '/api/settings', { cookie: engineer })
    expect(read.status).toBe(200)
    expect(read.body.calibrationDueSoonDays.value).toBe(30)
    expect(await badge()).toBe('ok')

    const set = await call('PUT', '/api/settings/calibration-due-soon-days', { cookie: admin, body: { days: 45 } })
    expect(set.status, JSON.stringify(set.body)).toBe(200)
    expect(set.body.calibrationDueSoonDays).toMatchObject({ value: 45, updatedBy: expect.any(String) })
    expect(await badge()).toBe('due_soon')
    const audit = await call('GET', '/api/audit?entity=app_setting&entityId=calibration_due_soon_days', { cookie: admin })
    expect(JSON.stringify(audit.body)).toContain('"days":45')
  })

  it('refuses a period that is not a whole number of days from 1 to 365 and keeps the one in force', async () => {
    for (const days of [0, 366, 2.5, '30']) {
      const r = await call('PUT', '/api/settings/calibration-due-soon-days', { cookie: admin, body: { days } })
      expect(r.status).toBe(400)
      expect(r.headers.get('content-type')).toContain('application/problem+json')
      expect(r.body.errors[0].pointer).toBe('/days')
    }
    expect((await call('GET', '/api/settings', { cookie: engineer })).body.calibrationDueSoonDays.value).toBe(45)
  })
})

import { createHash } from 'node:crypto'
import { beforeAll, describe, expect, it } from 'vitest'
import { call, signIn, ROLE_ACCOUNTS } from '../support/http'

const DAY = 86_400_000
// a route stations may call with their token
const STATION_ROUTE = '/api/products'

let admin = ''
let engineer = ''
let seq = 0
const uniqueName = () => `E2E-${process.pid}-${Date.now() % 1_000_000}-${++seq}`

async function createStation(cookie = engineer, extra: Record<string, unknown> = {}) {
  const r = await call('POST', '/api/stations', { cookie, body: { name: uniqueName(), location: 'Line C, bay 9', description: 'Probe station', ...extra } })
  expect(r.status).toBe(201)
  return r.body as { station: any; token: string }
}

function inDays(days: number): string {
  return new Date(Date.now() + days * DAY).toISOString()
}

beforeAll(async () => {
  admin = await signIn(ROLE_ACCOUNTS.admin)
  engineer = await signIn(ROLE_ACCOUNTS.engineer)
})

describe('station creation and tokens', () => {
  it('creates a station and returns its token once; afterwards only the hint is shown', async () => {
    const { station, token } = await createStation()
    expect(token).toMatch(/^tst_[A-Za-z0-9_-]{40,}$/)
    expect(station).toMatchObject({
      name: expect.stringMatching(/^E2E-/), location: 'Line C, bay 9', description: 'Probe station',
      lastSeenAt: null, runsToday: 0, lastVerdict: null, activeTokenHint: token.slice(0, 12), instruments: [], calibrationState: null,
    })

    const detail = await call('GET', `/api/stations/${station.id}`, { cookie: admin })
    expect(detail.status).toBe(200)
    const text = JSON.stringify(detail.body)
    expect(text).not.toContain(token)
    expect(text).not.toContain(createHash('sha256').update(token).digest('hex'))
    expect(detail.body.station.tokens).toHaveLength(1)
    const [t] = detail.body.station.tokens
    expect(t.hint).toBe(token.slice(0, 12))
    expect(t.revokedAt).toBeNull()
    expect(Object.keys(t).sort()).toEqual(['createdAt', 'createdBy', 'hint', 'id', 'lastUsedAt', 'revokedAt'])

    const list = await call('GET', '/api/stations', { cookie: engineer })
    expect(list.status).toBe(200)
    expect(JSON.stringify(list.body)).not.toContain(token)
    expect(list.body.stations.find((s: any) => s.id === station.id)?.activeTokenHint).toBe(token.slice(0, 12))
  })

  it('the demo stations are listed with their instruments', async () => {
    const list = await call('GET', '/api/stations', { cookie: admin })
    const lapsing = list.body.stations.find((s: any) => s.name === 'ATE-T3-02')
    expect(lapsing.instruments).toHaveLength(3)
    expect(lapsing.calibrationState).toBe('lapsed')
    expect(list.body.stations.find((s: any) => s.name === 'ATE-D2-01').calibrationState).toBe('ok')
  })

  it('rotation stops the old token at once and the new one works', async () => {
    const { station, token: first } = await createStation()
    expect((await call('GET', STATION_ROUTE, { token: first })).status).toBe(200)

    const rotated = await call('POST', `/api/stations/${station.id}/token`, { cookie: engineer })
    expect(rotated.status).toBe(201)
    const second = rotated.body.token as string
    expect(second).not.toBe(first)
    expect(rotated.body.hint).toBe(second.slice(0, 12))

    expect((await call('GET', STATION_ROUTE, { token: first })).status).toBe(401)
    expect((await call('GET', STATION_ROUTE, { token: second })).status).toBe(200)

    const detail = await call('GET', `/api/stations/${station.id}`, { cookie: engineer })
    expect(detail.body.station.activeTokenHint).toBe(second.slice(0, 12))
    const tokens = detail.body.station.tokens
    expect(tokens).toHaveLength(2)
    expect(tokens.find((t: any) => t.hint === first.slice(0, 12)).revokedAt).not.toBeNull()
    expect(tokens.find((t: any) => t.hint === second.slice(0, 12)).revokedAt).toBeNull()
  })

  it('revocation leaves the station without a working token', async () => {
    const { station, token } = await createStation(admin)
    const r = await call('DELETE', `/api/stations/${station.id}/token`, { cookie: admin })
    expect(r.status).toBe(200)
    expect(r.body).toEqual({ revoked: 1 })
    const refused = await call('GET', STATION_ROUTE, { token })
    expect(refused.status).toBe(401)
    expect(refused.headers.get('content-type')).toContain('application/problem+json')

    const detail = await call('GET', `/api/stations/${station.id}`, { cookie: admin })
    expect(detail.body.station.activeTokenHint).toBeNull()
    expect(detail.body.station.tokens.every((t: any) => t.revokedAt !== null)).toBe(true)

    const again = await call('DELETE', `/api/stations/${station.id}/token`, { cookie: admin })
    expect(again.body).toEqual({ revoked: 0 })
  })
})

describe('station access', () => {
  it('operators, quality engineers and customers are refused, and nothing is written', async () => {
    const { station, token } = await createStation()
    const name = uniqueName()
    for (const who of ['operator', 'quality', 'customer'] as const) {
      const cookie = await signIn(ROLE_ACCOUNTS[who])
      expect((await call('GET', '/api/stations', { cookie })).status).toBe(403)
      expect((await call('GET', `/api/stations/${station.id}`, { cookie })).status).toBe(403)
      expect((await call('POST', '/api/stations', { cookie, body: { name } })).status).toBe(403)
      expect((await call('POST', `/api/stations/${station.id}/token`, { cookie })).status).toBe(403)
      expect((await call('DELETE', `/api/stations/${station.id}/token`, { cookie })).status).toBe(403)
      const put = await call('PUT', `/api/stations/${station.id}/instruments`, { cookie, body: { instruments: [] } })
      expect(put.status).toBe(403)
    }
    const list = await call('GET', '/api/stations', { cookie: admin })
    expect(list.body.stations.some((s: any) => s.name === name)).toBe(false)
    expect((await call('GET', STATION_ROUTE, { token })).status).toBe(200)
  })

  it('a station token does not open station management', async () => {
    const { token } = await createStation()
    expect((await call('GET', '/api/stations', { token })).status).toBe(401)
  })
})

describe('station input checks', () => {
  it('refuses malformed station bodies with pointers', async () => {
    const missing = await call('POST', '/api/stations', { cookie: engineer, body: { location: 'x' } })
    expect(missing.status).toBe(400)
    expect(missing.headers.get('content-type')).toContain('application/problem+json')
    expect(missing.body.errors).toContainEqual({ pointer: '/name', message: 'is required' })

    const wrong = await call('POST', '/api/stations', { cookie: engineer, body: { name: 'x'.repeat(65), location: 7, colour: 'red' } })
    expect(wrong.status).toBe(400)
    expect(wrong.body.errors.map((e: any) => e.pointer).sort()).toEqual(['/colour', '/location', '/name'])

    const blank = await call('POST', '/api/stations', { cookie: engineer, body: { name: '   ' } })
    expect(blank.status).toBe(400)
    expect(blank.body.errors).toEqual([expect.objectContaining({ pointer: '/name' })])

    const notJson = await call('POST', '/api/stations', { cookie: engineer, raw: '{"name": ' })
    expect(notJson.status).toBe(400)
  })

  it('refuses a duplicate station name with 409 on /name', async () => {
    const { station } = await createStation()
    const dup = await call('POST', '/api/stations', { cookie: admin, body: { name: station.name } })
    expect(dup.status).toBe(409)
    expect(dup.body.errors).toEqual([expect.objectContaining({ pointer: '/name' })])
    const demo = await call('POST', '/api/stations', { cookie: admin, body: { name: 'ATE-D2-01' } })
    expect(demo.status).toBe(409)
  })

  it('refuses malformed instrument lists with one error per field', async () => {
    const { station } = await createStation()
    const r = await call('PUT', `/api/stations/${station.id}/instruments`, {
      cookie: engineer,
      body: { instruments: [
        { kind: '', model: 'PS-18', serial: 'A1', calibrationDue: '2027-02-30' },
        { kind: 'Power sensor', model: 'PS-18', calibrationDue: '2027-03-01T10:00:00' },
        { kind: 'Counter', model: 'FC-3', serial: 'C1', calibrationDue: '2027-03-01', id: 4 },
      ] },
    })
    expect(r.status).toBe(400)
    const byPointer = Object.fromEntries(r.body.errors.map((e: any) => [e.pointer, e.message]))
    expect(Object.keys(byPointer).sort()).toEqual([
      '/instruments/0/calibrationDue', '/instruments/0/kind', '/instruments/1/calibrationDue', '/instruments/1/serial', '/instruments/2/id',
    ])
    expect(r.body.errors).toHaveLength(5)
    expect(byPointer['/instruments/1/serial']).toBe('is required')
    expect(byPointer['/instruments/0/calibrationDue']).toMatch(/date/)

    const noList = await call('PUT', `/api/stations/${station.id}/instruments`, { cookie: engineer, body: { instruments: 'none' } })
    expect(noList.status).toBe(400)
    expect(noList.body.errors).toContainEqual(expect.objectContaining({ pointer: '/instruments' }))

    const twice = await call('PUT', `/api/stations/${station.id}/instruments`, {
      cookie: engineer,
      body: { instruments: [
        { kind: 'Power sensor', model: 'PS-18', serial: 'A1', calibrationDue: '2027-02-01' },
        { kind: 'Power sensor', model: 'PS-18', serial: 'A1', calibrationDue: '2027-02-01' },
      ] },
    })
    expect(twice.status).toBe(400)
    expect(twice.body.errors).toEqual([expect.objectContaining({ pointer: '/instruments/1/serial' })])

    const after = await call('GET', `/api/stations/${station.id}`, { cookie: engineer })
    expect(after.body.station.instruments).toEqual([])
  })

  it('answers 404 for an unknown station on every station route', async () => {
    const body = { instruments: [] }
    expect((await call('GET', '/api/stations/999999', { cookie: admin })).status).toBe(404)
    expect((await call('GET', '/api/stations/not-a-number', { cookie: admin })).status).toBe(404)
    expect((await call('POST', '/api/stations/999999/token', { cookie: admin })).status).toBe(404)
    expect((await call('DELETE', '/api/stations/999999/token', { cookie: admin })).status).toBe(404)
    const put = await call('PUT', '/api/stations/999999/instruments', { cookie: admin, body })
    expect(put.status).toBe(404)
    expect(put.headers.get('content-type')).toContain('application/problem+json')
  })
})

describe('instruments and calibration state', () => {
  it('replaces the list and reports each instrument and the worst state', async () => {
    const { station } = await createStation()
    const soonDate = inDays(10).slice(0, 10)
    const first = await call('PUT', `/api/stations/${station.id}/instruments`, {
      cookie: engineer,
      body: { instruments: [
        { kind: 'Signal source analyser', model: 'PNA-40', serial: 'SA-9001', calibrationDue: inDays(120) },
        { kind: 'Power sensor', model: 'PS-18', serial: 'PS-9002', calibrationDue: soonDate },
      ] },
    })
    expect(first.status).toBe(200)
    expect(first.body.station.calibrationState).toBe('due_soon')
    const bySerial = Object.fromEntries(first.body.station.instruments.map((i: any) => [i.serial, i]))
    expect(bySerial['SA-9001'].state).toBe('ok')
    expect(bySerial['PS-9002'].state).toBe('due_soon')
    // a bare date is due at 00:00 UTC that day
    expect(bySerial['PS-9002'].calibrationDue).toBe(`${soonDate}T00:00:00.000Z`)

    const second = await call('PUT', `/api/stations/${station.id}/instruments`, {
      cookie: admin,
      body: { instruments: [
        { kind: 'Frequency counter', model: 'FC-3', serial: 'FC-9003', calibrationDue: inDays(-1) },
        { kind: 'Power sensor', model: 'PS-18', serial: 'PS-9004', calibrationDue: inDays(31) },
      ] },
    })
    expect(second.status).toBe(200)
    expect(second.body.station.instruments.map((i: any) => [i.serial, i.state])).toEqual([['FC-9003', 'lapsed'], ['PS-9004', 'ok']])
    expect(second.body.station.calibrationState).toBe('lapsed')

    const listed = (await call('GET', '/api/stations', { cookie: engineer })).body.stations.find((s: any) => s.id === station.id)
    expect(listed.calibrationState).toBe('lapsed')
    expect(listed.instruments.map((i: any) => i.serial)).toEqual(['FC-9003', 'PS-9004'])

    const cleared = await call('PUT', `/api/stations/${station.id}/instruments`, { cookie: engineer, body: { instruments: [] } })
    expect(cleared.status).toBe(200)
    expect(cleared.body.station.instruments).toEqual([])
    expect(cleared.body.station.calibrationState).toBeNull()
  })

  it('accepts a date-time with an offset and stores the same instant', async () => {
    const { station } = await createStation()
    const r = await call('PUT', `/api/stations/${station.id}/instruments`, {
      cookie: engineer,
      body: { instruments: [{ kind: 'Power sensor', model: 'PS-18', serial: 'PS-77', calibrationDue: '2031-06-01T08:30:00+02:00' }] },
    })
    expect(r.status).toBe(200)
    expect(r.body.station.instruments[0].calibrationDue).toBe('2031-06-01T06:30:00.000Z')
  })
})

import { createHash } from 'node:crypto'
import { beforeAll, describe, expect, it } from 'vitest'
import { call, signIn, ROLE_ACCOUNTS } from '../support/http'

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

  it('the demo stations are listed with the instruments they hold now', async () => {
    const list = await call('GET', '/api/stations', { cookie: admin })
    const lapsing = list.body.stations.find((s: any) => s.name === 'ATE-X8-01')
    // the spare taken off the ×8 station is not listed; its power sensor lapsed three days ago
    expect(lapsing.instruments.map((i: any) => i.assetNumber).sort()).toEqual(['VFW-FC-0108', 'VFW-PS-2262', 'VFW-SA-0440'])
    expect(lapsing.instruments.find((i: any) => i.assetNumber === 'VFW-PS-2262').state).toBe('lapsed')
    expect(lapsing.calibrationState).toBe('lapsed')
    expect(list.body.stations.find((s: any) => s.name === 'ATE-T3-02').calibrationState).toBe('ok')
    const doubler = list.body.stations.find((s: any) => s.name === 'ATE-D2-01')
    expect(doubler.instruments.map((i: any) => i.assetNumber)).toContain('VFW-PS-2231')
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
      expect((await call('GET', `/api/stations/${station.id}/calibration`, { cookie })).status).toBe(403)
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

  it('answers 404 for an unknown station on every station route', async () => {
    expect((await call('GET', '/api/stations/999999', { cookie: admin })).status).toBe(404)
    expect((await call('GET', '/api/stations/not-a-number', { cookie: admin })).status).toBe(404)
    expect((await call('POST', '/api/stations/999999/token', { cookie: admin })).status).toBe(404)
    expect((await call('DELETE', '/api/stations/999999/token', { cookie: admin })).status).toBe(404)
    const history = await call('GET', '/api/stations/999999/calibration', { cookie: admin })
    expect(history.status).toBe(404)
    expect(history.headers.get('content-type')).toContain('application/problem+json')
  })
})

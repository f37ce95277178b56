// A station's owner is an active staff user, set by an engineer or admin, audited, and shown with the station.
import { beforeAll, describe, expect, it } from 'vitest'
import { call, signIn, ROLE_ACCOUNTS } from '../support/http'

let engineer = ''
let stationId = 0

beforeAll(async () => {
  engineer = await signIn(ROLE_ACCOUNTS.engineer)
  const name = `OWN-${Date.now().toString(36).toUpperCase()}`
  const created = await call('POST', '/api/stations', { cookie: engineer, body: { name } })
  expect(created.status, JSON.stringify(created.body)).toBe(201)
  stationId = created.body.station.id
})

describe('station owner', () => {
  it('is chosen among active staff, shown on the station, audited, and cleared with null', async () => {
    const people = (await call('GET', '/api/stations/owner-candidates', { cookie: engineer })).body.people
    expect(people.map((p: any) => p.role)).not.toContain('customer')
    const milo = people.find((p: any) => p.name === 'Milo Harrow')
    expect(milo).toBeTruthy()

    const set = await call('PUT', `/api/stations/${stationId}/owner`, { cookie: engineer, body: { ownerUserId: milo.id } })
    expect(set.status, JSON.stringify(set.body)).toBe(200)
    expect((await call('GET', `/api/stations/${stationId}`, { cookie: engineer })).body.station.owner).toEqual({ id: milo.id, name: 'Milo Harrow' })

    const admin = await signIn(ROLE_ACCOUNTS.admin)
    const audit = (await call('GET', `/api/audit?entity=station&entityId=${stationId}`, { cookie: admin })).body
    expect(JSON.stringify(audit)).toContain('"ownerUserId":' + milo.id)

    expect((await call('PUT', `/api/stations/${stationId}/owner`, { cookie: engineer, body: { ownerUserId: null } })).status).toBe(200)
    expect((await call('GET', `/api/stations/${stationId}`, { cookie: engineer })).body.station.owner).toBeNull()
  })

  it('refuses a customer account, an unknown user and a malformed body, and leaves the owner as it was', async () => {
    const customers = await signIn(ROLE_ACCOUNTS.admin)
    const users = (await call('GET', '/api/users', { cookie: customers })).body.users
    const buyer = users.find((u: any) => u.role === 'customer')
    const refused = await call('PUT', `/api/stations/${stationId}/owner`, { cookie: engineer, body: { ownerUserId: buyer.id } })
    expect(refused.status).toBe(422)
    expect(refused.headers.get('content-type')).toContain('application/problem+json')
    expect(refused.body.errors[0].pointer).toBe('/ownerUserId')
    expect((await call('PUT', `/api/stations/${stationId}/owner`, { cookie: engineer, body: { ownerUserId: 99_999_999 } })).status).toBe(422)
    expect((await call('PUT', `/api/stations/${stationId}/owner`, { cookie: engineer, body: { ownerUserId: 'x' } })).status).toBe(400)
    expect((await call('PUT', '/api/stations/99999999/owner', { cookie: engineer, body: { ownerUserId: null } })).status).toBe(404)
    expect((await call('GET', `/api/stations/${stationId}`, { cookie: engineer })).body.station.owner).toBeNull()
  })
})

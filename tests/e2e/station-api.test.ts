// The station software page's example and rules, checked against the running server.
import { randomUUID } from 'node:crypto'
import { describe, expect, it } from 'vitest'
import { call } from '../support/http'
import { stationTokens, uniqueSerial } from '../support/stations'
import { EXAMPLE_RESPONSE, EXAMPLE_RUN } from '../../shared/utils/station-api-example'
import { runSchema } from '../../shared/schemas/run.schema'

const token = () => stationTokens()['ATE-D2-01']!

describe('the station software page against the server', () => {
  it('serves the run schema the page reads, without a sign-in', async () => {
    const r = await call('GET', '/api/v1/schema/run.json')
    expect(r.status).toBe(200)
    expect(r.headers.get('content-type')).toContain('application/schema+json')
    expect(JSON.parse(JSON.stringify(runSchema))).toEqual(typeof r.body === 'string' ? JSON.parse(r.body) : r.body)
  })

  it('answers the worked example as the page shows it, replays it and refuses a changed body under its id', async () => {
    const body = { ...structuredClone(EXAMPLE_RUN), id: randomUUID(), serial: uniqueSerial('API'), lot: `API-${Date.now().toString(36)}` } as any
    const first = await call('POST', '/api/v1/runs', { body, token: token() })
    expect(first.status, JSON.stringify(first.body)).toBe(201)
    expect(first.body).toEqual({ ...EXAMPLE_RESPONSE, id: body.id, serial: body.serial, lot: body.lot })

    const again = await call('POST', '/api/v1/runs', { body, token: token() })
    expect(again.status).toBe(200)
    expect(again.body).toEqual(first.body)

    const changed = { ...body, measurements: [{ name: 'output_power', value: 9.5, unit: 'dBm' }] }
    const conflict = await call('POST', '/api/v1/runs', { body: changed, token: token() })
    expect(conflict.status).toBe(409)
    expect(conflict.headers.get('content-type')).toContain('application/problem+json')
  })

  it('refuses a post without a station token', async () => {
    expect((await call('POST', '/api/v1/runs', { body: EXAMPLE_RUN })).status).toBe(401)
  })
})

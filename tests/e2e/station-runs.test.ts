// A station's latest runs, as its page lists them.
import { describe, expect, it } from 'vitest'
import { call, signIn } from '../support/http'
import { stationTokens, tripleRun, uniqueSerial } from '../support/stations'

describe('GET /api/stations/:id/runs', () => {
  it('lists the station\'s latest runs newest first, with serial, part, lot, step, attempt and verdict', async () => {
    const admin = await signIn('admin@tercet.test')
    const stations = await call('GET', '/api/stations', { cookie: admin })
    const station = stations.body.stations.find((s: any) => s.name === 'ATE-T3-02')
    const token = stationTokens()['ATE-T3-02']!
    const lot = `SR-${Date.now().toString(36)}`
    // finish times a little ahead of the clock (within the five minutes a station's clock may lead) keep these two first
    const later = Date.now()
    const older = tripleRun({ serial: uniqueSerial('SR'), lot, startedAt: new Date(later).toISOString(), finishedAt: new Date(later + 60_000).toISOString() })
    const newer = tripleRun({ serial: uniqueSerial('SR'), lot, startedAt: new Date(later + 60_000).toISOString(), finishedAt: new Date(later + 120_000).toISOString(),
      measurements: [{ name: 'output_power', value: 2.0, unit: 'dBm' }] })
    // the newer one is posted first: the list follows finish time, not arrival
    expect((await call('POST', '/api/v1/runs', { body: newer, token })).status).toBe(201)
    expect((await call('POST', '/api/v1/runs', { body: older, token })).status).toBe(201)

    const r = await call('GET', `/api/stations/${station.id}/runs`, { cookie: await signIn('engineer@tercet.test') })
    expect(r.status).toBe(200)
    expect(r.body.runs.length).toBeLessThanOrEqual(20)
    expect(r.body.runs.slice(0, 2)).toEqual([
      { id: newer.id, serial: newer.serial, partNumber: 'VFW-T3-375', lot, step: 'final', attempt: 1, verdict: 'fail', startedAt: newer.startedAt, finishedAt: newer.finishedAt },
      { id: older.id, serial: older.serial, partNumber: 'VFW-T3-375', lot, step: 'final', attempt: 1, verdict: 'pass', startedAt: older.startedAt, finishedAt: older.finishedAt },
    ])
    const times = r.body.runs.map((x: any) => x.finishedAt)
    expect([...times].sort().reverse()).toEqual(times)
  })

  it('answers 404 for a station that does not exist', async () => {
    const r = await call('GET', '/api/stations/999999/runs', { cookie: await signIn('admin@tercet.test') })
    expect(r.status).toBe(404)
  })
})

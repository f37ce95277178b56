// A station buffers runs while offline and replays them later: the record must follow test time, not arrival.
import { randomUUID } from 'node:crypto'
import { beforeAll, describe, expect, it } from 'vitest'
import { call, signIn, ROLE_ACCOUNTS } from '../support/http'
import { stationTokens, tripleRun, uniqueSerial } from '../support/stations'

const T3 = stationTokens()['ATE-T3-01']!
const post = (body: unknown) => call('POST', '/api/v1/runs', { body, token: T3 })

// yesterday, 08:00 to 10:00 UTC
const day = new Date(Date.UTC(new Date().getUTCFullYear(), new Date().getUTCMonth(), new Date().getUTCDate() - 1))
const at = (hour: number, minute = 0) => {
  const start = new Date(day.getTime() + (hour * 60 + minute) * 60_000)
  return { startedAt: start.toISOString(), finishedAt: new Date(start.getTime() + 90_000).toISOString() }
}
// an output power above the tripler's limit fails the final step
const failing = (m: ReturnType<typeof tripleRun>['measurements']) => m.map((x) => (x.name === 'output_power' ? { ...x, value: 12 } : x))

const lot = uniqueSerial('ORD')
const serial = uniqueSerial('ORDU')
const ids = { tune: randomUUID(), burn: randomUUID(), fail10: randomUUID(), pass09: randomUUID() }
let quality = ''
let engineer = ''

beforeAll(async () => {
  quality = await signIn(ROLE_ACCOUNTS.quality)
  engineer = await signIn(ROLE_ACCOUNTS.engineer)
  const base = tripleRun({ lot, serial })
  for (const [id, step, time] of [[ids.tune, 'tune', at(8)], [ids.burn, 'burn-in', at(8, 30)]] as const) {
    const r = await post({ ...base, id, step, ...time, measurements: base.measurements.filter((m) => m.name === 'output_power' || m.name === 'supply_current') })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
  }
  // the failing final run tested at 10:00 arrives first; the passing one tested at 09:00 is replayed later
  const fail = await post({ ...base, id: ids.fail10, ...at(10), stationVerdict: 'fail', measurements: failing(base.measurements) })
  expect(fail.status, JSON.stringify(fail.body)).toBe(201)
  expect(fail.body).toMatchObject({ verdict: 'fail', attempt: 1 })
  const pass = await post({ ...base, id: ids.pass09, ...at(9) })
  expect(pass.status, JSON.stringify(pass.body)).toBe(201)
  expect(pass.body).toMatchObject({ verdict: 'pass', attempt: 1 })
})

describe('a passing run tested at 09:00 that arrives after a failing run tested at 10:00', () => {
  it('is attempt 1 in the unit history; the 10:00 run is attempt 2 and the latest', async () => {
    const r = await call('GET', `/api/units/${serial}`, { cookie: engineer })
    expect(r.status).toBe(200)
    const finals = r.body.runs.filter((x: any) => x.step === 'final').map((x: any) => ({ id: x.id, attempt: x.attempt, verdict: x.verdict }))
    expect(finals).toEqual(expect.arrayContaining([
      { id: ids.pass09, attempt: 1, verdict: 'pass' },
      { id: ids.fail10, attempt: 2, verdict: 'fail' },
    ]))
    expect(finals).toHaveLength(2)
  })

  it('leaves the unit failed in the lot units table, first pass at the final step', async () => {
    const r = await call('GET', `/api/lots/${lot}/units`, { cookie: engineer })
    expect(r.status).toBe(200)
    expect(r.body.units).toHaveLength(1)
    expect(r.body.units[0]).toMatchObject({ serial, verdict: 'fail', maxAttempts: 2, runs: 4 })
  })

  it('counts a first pass but no final pass in the lot yields', async () => {
    const r = await call('GET', `/api/lots/${lot}/summary`, { cookie: engineer })
    expect(r.status).toBe(200)
    const final = r.body.steps.find((s: any) => s.step === 'final')
    expect(final).toMatchObject({ units: 1, runs: 2, firstPass: 1, finalPass: 0 })
  })

  it('keeps only the 09:00 values in the first-attempt statistics', async () => {
    const r = await call('GET', `/api/lots/${lot}/summary`, { cookie: engineer })
    const power = r.body.capability.find((c: any) => c.step === 'final' && c.name === 'output_power')
    expect(power).toMatchObject({ n: 1, mean: 7 })
  })

  it('is refused by the release check, which names the unit and its failed latest result', async () => {
    const r = await call('POST', `/api/lots/${lot}/release`, { cookie: quality, body: {} })
    expect(r.status, JSON.stringify(r.body)).toBe(409)
    expect(r.body.notReadyUnits).toEqual([{ serial, problems: ['latest final result is a fail'] }])
  })

  it('exports the same attempts and verdict in the units CSV', async () => {
    const r = await fetch(`${(await import('../support/http')).baseUrl()}/api/lots/${lot}/units.csv`, { headers: { cookie: engineer } })
    expect(r.status).toBe(200)
    const text = await r.text()
    const [header, row] = text.trim().split(/\r?\n/)
    const cells = Object.fromEntries(header!.split(',').map((h, i) => [h.replace(/"/g, ''), row!.split(',')[i]!.replace(/"/g, '')]))
    expect(cells).toMatchObject({ serial, verdict: 'fail' })
  })
})

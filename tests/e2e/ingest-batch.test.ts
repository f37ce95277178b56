import { describe, expect, it } from 'vitest'
import { call } from '../support/http'
import { stationTokens, tripleRun, uniqueSerial } from '../support/stations'

const T3 = stationTokens()['ATE-T3-01']!
const post = (body: unknown) => call('POST', '/api/v1/runs', { body, token: T3 })
const batch = (runs: unknown[]) => call('POST', '/api/v1/runs/batch', { token: T3, body: { runs } })
const later = (run: ReturnType<typeof tripleRun>, ms: number) => ({
  startedAt: new Date(new Date(run.startedAt).getTime() + ms).toISOString(),
  finishedAt: new Date(new Date(run.finishedAt).getTime() + ms).toISOString(),
})

describe('POST /api/v1/runs/batch written together', () => {
  it('answers new units, retests, replays, conflicts, schema errors, rejections and repeated ids as one by one', async () => {
    const earlier = tripleRun()
    const first = await post(earlier)
    expect(first.status).toBe(201)

    const a = tripleRun()
    const b = tripleRun({ stationVerdict: 'fail', measurements: tripleRun().measurements.map((m) => m.name === 'output_power' ? { ...m, value: 1 } : m) })
    const retest = tripleRun({ serial: a.serial, ...later(a, 10_000) })
    const conflicting = { ...tripleRun(), id: earlier.id }
    const schemaError = { ...tripleRun(), measurements: 'none' }
    const unknown = tripleRun({ partNumber: 'NO-SUCH-PART' })
    const sameAgain = { ...a }
    const sameIdOther = { ...tripleRun(), id: a.id }

    const r = await batch([a, b, retest, earlier, conflicting, schemaError, unknown, sameAgain, sameIdOther])
    expect(r.status).toBe(200)
    const res = r.body.results
    expect(res.map((x: any) => x.status)).toEqual([201, 201, 201, 200, 409, 400, 422, 200, 409])
    expect(res.map((x: any) => x.id)).toEqual([a.id, b.id, retest.id, earlier.id, earlier.id, schemaError.id, unknown.id, a.id, a.id])
    expect(res[0].run).toMatchObject({ serial: a.serial, attempt: 1, verdict: 'pass', station: 'ATE-T3-01' })
    expect(res[1].run).toMatchObject({ serial: b.serial, attempt: 1, verdict: 'fail' })
    expect(res[2].run).toMatchObject({ serial: a.serial, attempt: 2 })
    expect(res[3].run).toEqual(first.body)
    expect(res[4].detail).toContain('different body')
    expect(res[5].errors[0].pointer).toMatch(/^\/runs\/5\/measurements/)
    expect(res[6].errors[0].pointer).toBe('/runs/6/partNumber')
    expect(res[7].run).toEqual(res[0].run)

    // what was written reads back as the batch answered it
    for (const [i, run] of [[0, a], [1, b], [2, retest]] as const) {
      const again = await post(run)
      expect(again.status).toBe(200)
      expect(again.body).toEqual(res[i].run)
    }
    const third = await post(tripleRun({ serial: a.serial, ...later(a, 20_000) }))
    expect(third.body.attempt).toBe(3)
  })

  it('refuses a serial already recorded in another lot, also when the batch itself put it there', async () => {
    const stored = tripleRun()
    expect((await post(stored)).status).toBe(201)
    const serial = uniqueSerial()
    const inA = tripleRun({ serial })
    const inB = tripleRun({ serial, lot: 'T3-E2E-02', ...later(inA, 5000) })
    const moved = tripleRun({ serial: stored.serial, lot: 'T3-E2E-02' })
    const r = await batch([inA, inB, moved])
    expect(r.body.results.map((x: any) => x.status)).toEqual([201, 422, 422])
    expect(r.body.results[1].errors[0].pointer).toBe('/runs/1/lot')
    expect(r.body.results[2].errors[0].pointer).toBe('/runs/2/lot')
    expect((await post(inB)).status).toBe(422)
  })

  it('stores a full batch of 500 runs with attempts in order', async () => {
    const serials = Array.from({ length: 100 }, () => uniqueSerial('BB'))
    const runs = Array.from({ length: 500 }, (_, i) => {
      const base = tripleRun({ serial: serials[i % 100] })
      return { ...base, ...later(base, Math.floor(i / 100) * 1000) }
    })
    const r = await batch(runs)
    expect(r.status).toBe(200)
    expect(r.body.results.every((x: any) => x.status === 201)).toBe(true)
    expect(r.body.results.map((x: any) => x.run.attempt)).toEqual(runs.map((_, i) => Math.floor(i / 100) + 1))
    const replay = await batch(runs.slice(0, 3))
    expect(replay.body.results.map((x: any) => x.run)).toEqual(r.body.results.slice(0, 3).map((x: any) => x.run))
  })
})

import { createHash, randomUUID } from 'node:crypto'
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import {
  createStation, revokeStationTokens, rotateStationToken, stationDetail, stationList,
} from '../../server/services/stations'
import { RuleError } from '../../server/services/rule-error'

let db: Knex
let actorId: number
const created: number[] = []
const sha256 = (s: string) => createHash('sha256').update(s, 'utf8').digest('hex')
const name = (tag: string) => `INT-${tag}-${process.pid}-${Date.now() % 1_000_000}`

beforeAll(async () => {
  db = createKnex(connectionFromEnv(), { min: 0, max: 4 })
  actorId = (await db('users').where({ email: 'admin@tercet.test' }).first('id')).id
})

afterAll(async () => {
  if (created.length) {
    await db('audit_log').where({ entity: 'station' }).whereIn('entity_id', created.map(String)).delete()
    await db('station_tokens').whereIn('station_id', created).delete()
    await db('stations').whereIn('id', created).delete()
  }
  await db.destroy()
})

describe('station tokens at rest', () => {
  it('stores only the SHA-256 of a new token and a 12-character hint', async () => {
    const { station, token } = await createStation(db, actorId, { name: name('hash'), location: 'Integration rack' })
    created.push(station.id)
    const rows = await db('station_tokens').where({ station_id: station.id })
    expect(rows).toHaveLength(1)
    const row = rows[0]
    expect(row.token_hash).toBe(sha256(token))
    expect(row.hint).toBe(token.slice(0, 12))
    expect(row.created_by).toBe(actorId)
    expect(row.revoked_at).toBeNull()
    for (const value of Object.values(row)) expect(String(value)).not.toContain(token)

    const audit = await db('audit_log').where({ entity: 'station', entity_id: String(station.id) })
    expect(audit.map((a: any) => a.action)).toEqual(['create'])
    expect(JSON.stringify(audit)).not.toContain(token)
    expect(JSON.stringify(audit)).not.toContain(sha256(token))
  })

  it('rotation revokes the old row and stores the new token hashed, audited in the same write', async () => {
    const { station, token: first } = await createStation(db, actorId, { name: name('rotate') })
    created.push(station.id)
    const issued = (await rotateStationToken(db, actorId, station.id))!
    expect(issued.token).not.toBe(first)

    const rows = await db('station_tokens').where({ station_id: station.id }).orderBy('id')
    expect(rows.map((r: any) => r.token_hash)).toEqual([sha256(first), sha256(issued.token)])
    expect(rows[0].revoked_at).toBeInstanceOf(Date)
    expect(rows[1].revoked_at).toBeNull()
    for (const value of Object.values(rows[1])) expect(String(value)).not.toContain(issued.token)

    expect(await revokeStationTokens(db, actorId, station.id)).toEqual({ revoked: 1 })
    expect(await db('station_tokens').where({ station_id: station.id }).whereNull('revoked_at').count({ n: '*' })).toEqual([{ n: 0 }])

    const audit = await db('audit_log').where({ entity: 'station', entity_id: String(station.id) }).orderBy('id')
    expect(audit.map((a: any) => a.action)).toEqual(['create', 'token_rotate', 'token_revoke'])
    const rotate = audit[1]
    const parse = (v: unknown) => (typeof v === 'string' ? JSON.parse(v) : v)
    expect(parse(rotate.before)).toEqual({ activeTokenHints: [first.slice(0, 12)] })
    expect(parse(rotate.after)).toEqual({ activeTokenHints: [issued.hint] })
    expect(JSON.stringify(audit)).not.toContain(issued.token)
  })

  it('unknown stations change nothing', async () => {
    expect(await rotateStationToken(db, actorId, 99_999_999)).toBeUndefined()
    expect(await revokeStationTokens(db, actorId, 99_999_999)).toBeUndefined()
    expect(await db('audit_log').where({ entity: 'station', entity_id: '99999999' }).count({ n: '*' })).toEqual([{ n: 0 }])
    expect(await db('station_tokens').where({ station_id: 99_999_999 }).count({ n: '*' })).toEqual([{ n: 0 }])
  })

  it('a duplicate name is a rule error on /name and writes nothing', async () => {
    const { station } = await createStation(db, actorId, { name: name('dup') })
    created.push(station.id)
    const err = await createStation(db, actorId, { name: `  ${station.name} ` }).catch((e) => e)
    expect(err).toBeInstanceOf(RuleError)
    expect(err).toMatchObject({ status: 409, errors: [{ pointer: '/name' }] })
    expect(await db('stations').where({ name: station.name }).count({ n: '*' })).toEqual([{ n: 1 }])
    const creates = await db('audit_log').where({ entity: 'station', action: 'create' }).whereRaw("JSON_VALUE(`after`, '$.name') = ?", [station.name])
    expect(creates).toHaveLength(1)
  })
})

describe('station activity', () => {
  it('counts runs finished since midnight plant time (Europe/Berlin: CEST, UTC+2, in May) and reports the latest verdict', async () => {
    const now = new Date('2031-05-06T10:00:00Z')
    const trx = await db.transaction()
    try {
      await trx('app_settings').where({ name: 'plant_time_zone' }).update({ value: 'Europe/Berlin' })
      const { station } = await createStation(trx, actorId, { name: name('runs') })
      const lot = await trx('lots').first('id', 'product_id')
      const [unitId] = await trx('units').insert({ product_id: lot.product_id, lot_id: lot.id, serial: name('unit') })
      let attempt = 0
      const run = (finishedAt: string, verdict: 'pass' | 'fail') => ({
        uuid: randomUUID(), body_hash: '0'.repeat(64), unit_id: unitId, lot_id: lot.id,
        station_id: station.id, step: 'final', attempt: ++attempt, started_at: new Date(new Date(finishedAt).getTime() - 60_000),
        finished_at: new Date(finishedAt), server_verdict: verdict,
      })
      // inserted out of time order: the latest verdict goes by finish time, not by row order
      await trx('test_runs').insert(run('2031-05-06T09:00:00.000Z', 'fail'))
      // 00:00 CEST on the 6th is 22:00 UTC on the 5th: the plant day's first run, on the UTC date before
      await trx('test_runs').insert(run('2031-05-05T22:00:00.000Z', 'pass'))
      // 23:59:59.999 CEST on the 5th: the plant's yesterday
      await trx('test_runs').insert(run('2031-05-05T21:59:59.999Z', 'pass'))

      const listed = (await stationList(trx, now)).find((s) => s.id === station.id)!
      expect(listed.runsToday).toBe(2)
      expect(listed.lastVerdict).toBe('fail')
      // 22:00 UTC on the 6th is midnight of the 7th in Berlin: a new plant day with no runs yet
      const detail = (await stationDetail(trx, station.id, new Date('2031-05-06T22:00:00Z')))!
      expect(detail.runsToday).toBe(0)
      expect(detail.lastVerdict).toBe('fail')

      // the same runs counted by a plant on UTC: midnight is 00:00 UTC, so only the 09:00 run is today
      await trx('app_settings').where({ name: 'plant_time_zone' }).update({ value: 'UTC' })
      expect((await stationList(trx, now)).find((s) => s.id === station.id)!.runsToday).toBe(1)
    } finally {
      await trx.rollback()
    }
  })
})

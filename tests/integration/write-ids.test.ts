// The one-round-trip write gives a group's runs the ids of its insert's first id plus k increments, and checks it.
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createKnex, connectionFromEnv } from '../../server/database/connection'
import { insertedRunIdsCheck, rememberFirstRunId } from '../../server/database/repositories/run-writes'
import { withDriverConnection, sendStatements } from '../../server/database/raw-connection'
import { ingestBatch } from '../../server/services/ingest/ingest-batch'
import { DEMO_PRODUCTS } from '../../fixtures/demo-catalogue'
import { generateRun, mulberry32 } from '../../fixtures/run-generator'

let db: Knex
let station: { id: number; name: string }
const tripler = DEMO_PRODUCTS.find((p) => p.partNumber === 'VFW-T3-375')!
beforeAll(async () => {
  db = createKnex(connectionFromEnv())
  station = await db('stations').where({ name: 'ATE-T3-01' }).first('id', 'name')
})
afterAll(async () => { await db.destroy() })

async function oneRun(lot: string, serial: string): Promise<{ id: number; uuid: string }> {
  const [r] = await ingestBatch(db, station, [generateRun({ product: tripler, lot, serial, step: 'tune', startedAt: new Date(Date.now() - 3_600_000), rand: mulberry32(serial.length), withTrace: false })])
  expect(r!.status).toBe(201)
  const row = await db('test_runs').where({ uuid: (r as any).run.id }).first('id', 'uuid')
  return { id: Number(row.id), uuid: row.uuid }
}

describe('runs written in one round trip', () => {
  it('store each run of a group under the id its measurements, step rows and queue entries name', async () => {
    const lot = `IDS-${Date.now().toString(36)}`
    const runs = Array.from({ length: 12 }, (_, i) => generateRun({ product: tripler, lot, serial: `${lot}-${i}`, step: 'tune', startedAt: new Date(Date.now() - 3_600_000 + i * 1000), rand: mulberry32(i + 1), withTrace: false }))
    const results = await ingestBatch(db, station, runs)
    expect(results.map((r) => r.status)).toEqual(runs.map(() => 201))
    const stored = await db('test_runs as r').join('units as u', 'u.id', 'r.unit_id').whereIn('r.uuid', runs.map((r) => r.id))
      .select('r.id', 'r.uuid', 'u.serial', 'r.lot_id')
    expect(stored).toHaveLength(12)
    for (const r of stored) {
      // every row that hangs off the run names the run's own id
      const ms = await db('measurements').where({ run_id: r.id }).count({ n: '*' }).first()
      expect(Number((ms as any).n)).toBeGreaterThan(0)
      const step = await db('unit_steps as s').join('units as u', 'u.id', 's.unit_id').where({ 'u.serial': r.serial, 's.step': 'tune' }).first('s.latest_run_id')
      expect(Number(step.latest_run_id)).toBe(Number(r.id))
    }
    const ids = stored.map((r: any) => Number(r.id)).sort((a: number, b: number) => a - b)
    expect(ids.at(-1)! - ids[0]!).toBe(11)
  })

  it('refuses, with error 1242, ids that are not one increment apart in insert order', async () => {
    const lot = `IDC-${Date.now().toString(36)}`
    const a = await oneRun(lot, `${lot}-a`)
    const between = await oneRun(lot, `${lot}-x`)
    const b = await oneRun(lot, `${lot}-b`)
    await withDriverConnection(db, async (send) => {
      await send(`SET @tercet_first_run = ${a.id}`)
      // a and the run stored right after it are one increment apart: the check answers the first id
      const [ok] = await sendStatements(send, [insertedRunIdsCheck([a.uuid, between.uuid])])
      expect(ok).toEqual([{ first: a.id, inc: 1 }])
      // a and b are not: another run's id lies between them
      await expect(sendStatements(send, [insertedRunIdsCheck([a.uuid, b.uuid])])).rejects.toMatchObject({ code: 'ER_SUBQUERY_NO_1_ROW' })
      expect(rememberFirstRunId).toMatch(/LAST_INSERT_ID\(\)/)
    })
  })
})

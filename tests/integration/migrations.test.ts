import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Knex } from 'knex'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { migrationSource } from '../../server/database/migration-source'

const dbName = `${connectionFromEnv().database}_migrations`
let admin: Knex
let db: Knex

beforeAll(async () => {
  admin = createKnex({ ...connectionFromEnv(), database: connectionFromEnv().database })
  await admin.raw(`DROP DATABASE IF EXISTS \`${dbName}\``)
  await admin.raw(`CREATE DATABASE \`${dbName}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci`)
  db = createKnex({ ...connectionFromEnv(), database: dbName })
})

afterAll(async () => {
  await db.destroy()
  await admin.raw(`DROP DATABASE IF EXISTS \`${dbName}\``)
  await admin.destroy()
})

async function tables(): Promise<string[]> {
  const [rows] = await db.raw('SHOW TABLES')
  return rows.map((r: any) => Object.values(r)[0] as string).filter((t: string) => !t.startsWith('knex_')).sort()
}

describe('migrations', () => {
  it('go up, all the way down, and up again', async () => {
    await db.migrate.latest({ migrationSource })
    const up = await tables()
    expect(up).toEqual(expect.arrayContaining(['users', 'products', 'spec_revisions', 'spec_limits', 'stations', 'station_tokens', 'instruments',
      'lots', 'units', 'test_runs', 'measurements', 'traces', 'shipments', 'shipment_units', 'certificates', 'alert_rules', 'audit_log',
      'customers', 'customer_contacts', 'unit_returns', 'retest_policies', 'unit_dispositions', 'certificate_documents', 'certificate_sequences', 'request_limits', 'lot_param_stats', 'lot_step_stats', 'lot_stats_pending', 'unit_steps',
      'instrument_holdings', 'calibration_records', 'calibration_certificates', 'run_instruments', 'calibration_history_version', 'calibration_rejudge', 'mail_outbox', 'password_resets',
      'calibration_impacts', 'calibration_impact_decisions', 'calibration_impact_notices']))
    await db.migrate.rollback({ migrationSource }, true)
    expect(await tables()).toEqual([])
    await db.migrate.latest({ migrationSource })
    expect(await tables()).toEqual(up)
  })

  it('stores measured values as DOUBLE and times as DATETIME(3)', async () => {
    const [cols] = await db.raw(`SELECT column_name AS c, column_type AS t FROM information_schema.columns WHERE table_schema = ? AND table_name = 'measurements'`, [dbName])
    const types = Object.fromEntries(cols.map((r: any) => [r.c, r.t]))
    expect(types.value).toBe('double')
    expect(types.started_at).toBe('datetime(3)')
  })
})

describe('the calibration history migration', () => {
  const MINE = '20261202_014_calibration_history'

  it('carries each listed instrument over as an instrument held since its station was created, with its due date, and back', async () => {
    await db.migrate.rollback({ migrationSource }, true)
    for (const name of (await migrationSource.getMigrations([])).filter((n) => n < MINE)) await db.migrate.up({ migrationSource, name })
    const created = new Date('2030-04-01T08:00:00.000Z')
    const [stationId] = await db('stations').insert({ name: 'MIG-1', created_at: created })
    await db('instruments').insert([
      { station_id: stationId, kind: 'Power sensor', model: 'PS-18', serial: 'P-1', calibration_due: new Date('2031-01-10T00:00:00Z') },
      { station_id: stationId, kind: 'Frequency counter', model: 'FC-3', serial: 'F-1', calibration_due: new Date('2030-02-01T00:00:00Z') },
    ])

    await db.migrate.up({ migrationSource, name: MINE })
    const instruments = await db('instruments').orderBy('id')
    expect(instruments.map((i: any) => [i.kind, i.model, i.serial])).toEqual([['Power sensor', 'PS-18', 'P-1'], ['Frequency counter', 'FC-3', 'F-1']])
    expect(new Set(instruments.map((i: any) => i.asset_number)).size).toBe(2)
    const holdings = await db('instrument_holdings').orderBy('instrument_id')
    expect(holdings.map((h: any) => [h.station_id, h.from_at.toISOString(), h.until_at])).toEqual([[stationId, created.toISOString(), null], [stationId, created.toISOString(), null]])
    const records = await db('calibration_records').orderBy('instrument_id')
    expect(records.map((r: any) => [r.due_at.toISOString(), r.superseded_from])).toEqual([['2031-01-10T00:00:00.000Z', null], ['2030-02-01T00:00:00.000Z', null]])
    expect(await db('calibration_history_version').select('version')).toEqual([{ version: 1 }])

    await db.migrate.down({ migrationSource, name: MINE })
    const back = await db('instruments').orderBy('id')
    expect(back.map((i: any) => [i.station_id, i.serial, i.calibration_due.toISOString()])).toEqual([[stationId, 'P-1', '2031-01-10T00:00:00.000Z'], [stationId, 'F-1', '2030-02-01T00:00:00.000Z']])
    await db.migrate.latest({ migrationSource })
  })
})

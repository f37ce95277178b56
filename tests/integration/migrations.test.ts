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
      'lots', 'units', 'test_runs', 'measurements', 'traces', 'shipments', 'shipment_units', 'certificates', 'alert_rules', 'alert_events', 'audit_log',
      'customers', 'customer_contacts', 'lot_param_stats', 'lot_step_stats', 'lot_stats_pending', 'unit_steps']))
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

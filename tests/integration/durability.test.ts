import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createKnex, connectionFromEnv } from '../../server/database/connection'
// @ts-expect-error plain ES module without types
import { commitSetting } from '../../scripts/lib/mariadb.mjs'

let db: Knex
beforeAll(() => { db = createKnex(connectionFromEnv()) })
afterAll(async () => { await db.destroy() })

describe('the database brought up by the project scripts', () => {
  it('writes every commit to disk before acknowledging it, unless fast commits were asked for', async () => {
    const [[row]] = await db.raw('SELECT @@innodb_flush_log_at_trx_commit AS flush, @@sync_binlog AS sync')
    expect(commitSetting({})).toEqual({ fast: false, flushLog: 1, syncBinlog: 1 })
    expect(commitSetting({ TERCET_DB_FAST_COMMIT: '1' })).toEqual({ fast: true, flushLog: 2, syncBinlog: 0 })
    expect({ flush: Number(row.flush), sync: Number(row.sync) }).toEqual({ flush: commitSetting().flushLog, sync: commitSetting().syncBinlog })
    // the suite runs with the shipped default
    expect(process.env.TERCET_DB_FAST_COMMIT).not.toBe('1')
    expect(Number(row.flush)).toBe(1)
  })
})

// A fold recomputes the statistics rows a late run marked, then drops the marks it read. A write that marks the same
// rows again in between must not have its mark dropped with the old one: it waits for the fold, and its mark stays.
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createKnex, connectionFromEnv } from '../../server/database/connection'
import { forgetRebuildMark, rebuildMarksOfLot } from '../../server/database/repositories/param-stats'
import { statsRebuildMark } from '../../server/database/repositories/run-writes'

let db: Knex
// a lot id no real lot has, so no other test's rows are touched
const lotId = 1_900_000_000 + Math.floor(Math.random() * 100_000_000)
const mark = { lotId, step: 'final', revisionId: 1, stationId: 1 }

beforeAll(() => { db = createKnex(connectionFromEnv()) })
afterAll(async () => {
  await db('lot_stats_rebuild').where({ lot_id: lotId }).del()
  await db('lot_fold_leases').where({ lot_id: lotId }).del()
  await db.destroy()
})

/** A write's mark statement on a connection of its own, giving up after one second of waiting for a lock. */
async function markFromWriter(): Promise<'inserted' | 'already there' | 'waited'> {
  const conn = await db.client.acquireConnection()
  try {
    await db.raw('SET SESSION innodb_lock_wait_timeout = 1').connection(conn)
    const m = statsRebuildMark([mark])
    const [result] = await db.raw(m.sql, m.values).connection(conn)
    return result.affectedRows === 1 ? 'inserted' : 'already there'
  } catch (e: any) {
    if (e?.code === 'ER_LOCK_WAIT_TIMEOUT') return 'waited'
    throw e
  } finally {
    await db.client.releaseConnection(conn)
  }
}

describe('rebuild marks taken by a fold', () => {
  it('make a write marking the same rows wait until the fold has dropped them, so the new mark survives', async () => {
    let held = false
    for (let tries = 0; !held && tries < 5; tries++) {
      const m = statsRebuildMark([mark])
      await db.raw(m.sql, m.values)
      await db.transaction(async (fold) => {
        const marks = await rebuildMarksOfLot(fold, lotId, { forUpdate: true })
        // the server's background fold may have taken the mark first; then set it again and retry
        if (!marks.length) return
        held = true
        expect(await markFromWriter()).toBe('waited')
        for (const x of marks) await forgetRebuildMark(fold, x)
      })
    }
    expect(held).toBe(true)
    // once the fold is done, the write's mark goes in as a new row, for the next fold
    expect(await markFromWriter()).toBe('inserted')
  })
})

// Every fold of queued runs and every moving-range repair holds one named database lock, so that across all
// server processes only one of them rewrites lot_param_stats at a time. Two at once, on neighbouring lots, would
// take gap locks on each other's key ranges and deadlock when both insert new rows.
import type { Knex } from 'knex'
import { withDriverConnection } from '../../database/raw-connection'
import { FifoGate } from '../../utils/fifo-gate'

const LOCK = 'tercet_param_stats_fold'

/** Starts a transaction on the session that holds the lock. */
export type BeginTransaction = <T>(scope: (trx: Knex.Transaction) => Promise<T>) => Promise<T>

export const STATS_LOCK_BUSY = Symbol('stats lock busy')

// Within one process the callers queue here, without a pooled connection each: readers waiting for a fold must not
// take the connections that stations' runs are written on.
const inProcess = new FifoGate(1)

/**
 * Runs `work` while holding the lock, waiting up to `waitSeconds` for it (0: do not wait). The lock is given back
 * only after `work`'s transactions have committed, so the next holder reads what this one wrote.
 */
export async function withStatsLock<T>(db: Knex, waitSeconds: number, work: (begin: BeginTransaction) => Promise<T>): Promise<T | typeof STATS_LOCK_BUSY> {
  if (waitSeconds === 0 && !inProcess.idle) return STATS_LOCK_BUSY
  return inProcess.run(() => withDriverConnection(db, async (send, discard, connection) => {
    const [row] = await send('SELECT GET_LOCK(?, ?) AS got', [LOCK, waitSeconds])
    if (Number(row?.got) !== 1) return STATS_LOCK_BUSY
    try {
      return await work((scope) => db.transaction(scope, { connection }))
    } finally {
      // a session that cannot say RELEASE_LOCK is dropped, and the server releases its locks with it
      await send('DO RELEASE_LOCK(?)', [LOCK]).catch(discard)
    }
  }))
}

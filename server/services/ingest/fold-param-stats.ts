// Folds queued runs into the lot × station parameter rows, many runs per transaction. Each run's own transaction
// only queues it (one small row), so 32 stations posting into one lot never wait on the statistics rows, and the
// database updates each row once per fold instead of once per run. Readers fold their lot first, so what they show
// includes every stored run.
import type { Knex } from 'knex'
import { movingRangeSum } from '../../../shared/utils/capability'
import {
  anyPendingRuns, claimPendingRuns, foldedFirstAttemptValues, forgetPendingRuns, lockParamRows, lockStaleRow, staleParamRowKeys, valuesOfRuns,
  writeMovingRange, writeParamRows,
} from '../../database/repositories/param-stats'
import { problem } from '../../utils/problem'
import { type BeginTransaction, STATS_LOCK_BUSY, withStatsLock } from './stats-lock'
import { addValue, emptyParamRow, inTimeOrder, type ParamRow, type ParamRowKey } from './param-stats-merge'

const RUNS_PER_FOLD = 500
const RETRIES = 3
// a reader waits this long for a fold in progress; a slice of 500 runs takes well under a second
const READER_WAIT_SECONDS = 30

const keyText = (k: ParamRowKey) => `${k.lotId}\u0000${k.step}\u0000${k.name}\u0000${k.qualifier}\u0000${k.revisionId}\u0000${k.stationId}`

/** One transaction: claim queued runs, add their measurements to the rows, drop them from the queue. */
async function foldIn(trx: Knex.Transaction, lotIds: number[] | undefined): Promise<number> {
  const pending = await claimPendingRuns(trx, { limit: RUNS_PER_FOLD, lotIds })
  if (!pending.length) return 0
  const runIds = pending.map((p) => p.runId)
  const values = await valuesOfRuns(trx, runIds)
  const rows = new Map<string, ParamRow>()
  for (const r of await lockParamRows(trx, [...new Set(pending.map((p) => p.lotId))])) rows.set(keyText(r), r)
  const touched = new Set<string>()
  values.sort((a, b) => inTimeOrder(a.value, b.value))
  for (const { key, value } of values) {
    const k = keyText(key)
    let row = rows.get(k)
    if (!row) { row = emptyParamRow(key, value); rows.set(k, row) }
    addValue(row, value)
    touched.add(k)
  }
  await writeParamRows(trx, [...touched].map((k) => rows.get(k)!))
  await forgetPendingRuns(trx, runIds)
  return pending.length
}

/** Folds slices of the queue until it is empty, retrying a slice that lost a deadlock. */
async function foldAll(begin: BeginTransaction, lotIds: number[] | undefined): Promise<number> {
  let total = 0
  for (let tries = 0; ;) {
    try {
      const n = await begin((trx) => foldIn(trx, lotIds))
      total += n
      if (n < RUNS_PER_FOLD) return total
    } catch (e: any) {
      if ((e?.code === 'ER_LOCK_DEADLOCK' || e?.code === 'ER_LOCK_WAIT_TIMEOUT') && ++tries < RETRIES) continue
      throw e
    }
  }
}

/** Recomputes one row's moving-range terms from the measurements, after a late arrival left them stale. */
async function rebuildMovingRange(begin: BeginTransaction, key: ParamRowKey): Promise<void> {
  await begin(async (trx) => {
    if (!(await lockStaleRow(trx, key))) return
    const values = await foldedFirstAttemptValues(trx, key)
    await writeMovingRange(trx, key, movingRangeSum(values.map((v) => v.value)), values.at(-1))
  })
}

function busy(): never {
  throw problem(503, 'The lot statistics are being updated; retry in a moment.', { headers: { 'Retry-After': '2' } })
}

/**
 * Folds every queued run (of the given lots, or all). A `background` fold gives way when another fold is running;
 * any other waits for it, so that what its caller reads afterwards includes every stored run.
 * Returns how many runs were folded.
 */
export async function foldPendingStats(db: Knex, opts: { lotIds?: number[]; background?: boolean } = {}): Promise<number> {
  if (!(await anyPendingRuns(db, opts.lotIds))) return 0
  const folded = await withStatsLock(db, opts.background ? 0 : READER_WAIT_SECONDS, (begin) => foldAll(begin, opts.lotIds))
  if (folded !== STATS_LOCK_BUSY) return folded
  if (opts.background) return 0
  busy()
}

/**
 * Brings the lots' parameter rows up to date before a reader reads them: queued runs are folded in and moving
 * ranges that a late arrival left stale are recomputed, all under the one statistics lock.
 */
export async function freshenLotStats(db: Knex, lotIds: number[]): Promise<void> {
  if (!lotIds.length) return
  const [queued, stale] = await Promise.all([anyPendingRuns(db, lotIds), staleParamRowKeys(db, lotIds)])
  if (!queued && !stale.length) return
  const done = await withStatsLock(db, READER_WAIT_SECONDS, async (begin) => {
    if (queued) await foldAll(begin, lotIds)
    // the fold may itself have found late arrivals
    for (const key of queued ? await staleParamRowKeys(db, lotIds) : stale) await rebuildMovingRange(begin, key)
  })
  if (done === STATS_LOCK_BUSY) busy()
}

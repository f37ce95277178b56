// Folds queued runs into the lot × revision × station parameter rows, many runs per transaction. Each run's own
// transaction only queues it (one small row), so stations posting into one lot never wait on the statistics rows,
// and the database updates each row once per fold instead of once per run. A fold holds its lot's lease row for the
// length of its transaction: folds of one lot take turns, folds of different lots run side by side. Readers fold
// their lot first, so what they show includes every run stored before they asked.
import type { Knex } from 'knex'
import { movingRangeSum } from '../../../shared/utils/capability'
import { markProductOfLot } from '../../database/repositories/alert-marks'
import { ensureFoldLease, lotsToFold, markFolded, takeFoldLease } from '../../database/repositories/fold-leases'
import {
  anyRebuildMarks, anyStaleParamRows, foldedSampleValues, staleParamRows, forgetQueuedRuns, forgetRebuildMark, newestQueuedRun, paramRowsOfLot, queuedRunsOfLot,
  rebuildMarksOfLot, rebuildParamRows, valuesOfRuns, writeMovingRange, writeParamRows,
} from '../../database/repositories/param-stats'
import { RetryLater } from '../rule-error'
import { addValuesToBins, rebuildMarkedBins } from './fold-bins'
import { addValue, emptyParamRow, inTimeOrder, type ParamRow, type ParamRowKey } from './param-stats-merge'

const RUNS_PER_FOLD = 500
const RETRIES = 4
// a reader waits this long for a fold of its lot in progress; a slice of 500 runs takes well under a second
const READER_WAIT_SECONDS = 30
const LOTS_PER_PASS = 50

const keyText = (k: ParamRowKey) => `${k.step}\u0000${k.name}\u0000${k.qualifier}\u0000${k.revisionId}\u0000${k.stationId}`

type Slice = { folded: number; more: boolean } | 'busy' | 'missing'

/**
 * One transaction on one lot: take its lease, add up to RUNS_PER_FOLD queued runs to its rows, recompute the rows
 * marked for rebuild, drop the folded runs from the queue. With `repair` (a reader's fold) the moving ranges that
 * late values left stale are taken again too: that reads every value of the row, so the background leaves it to
 * the next reader rather than repeating it after every late arrival.
 */
async function foldSlice(db: Knex, lotId: number, waitSeconds: number, repair: boolean, upTo?: number): Promise<Slice> {
  return db.transaction(async (trx) => {
    const lease = await takeFoldLease(trx, lotId, waitSeconds)
    if (lease !== 'taken') return lease
    const runIds = await queuedRunsOfLot(trx, lotId, RUNS_PER_FOLD, upTo)
    const marks = await rebuildMarksOfLot(trx, lotId)
    let stale: ParamRowKey[] = repair && !runIds.length ? await staleParamRows(trx, lotId) : []
    if (!runIds.length && !marks.length && !stale.length) return { folded: 0, more: false }
    if (runIds.length) {
      const values = await valuesOfRuns(trx, runIds)
      const rows = new Map<string, ParamRow>()
      // only the rows of the stations whose runs are folded here: a lot tested on many stations has many more
      for (const r of await paramRowsOfLot(trx, lotId, [...new Set(values.map((v) => v.key.stationId))])) rows.set(keyText(r), r)
      const touched = new Set<string>()
      values.sort((a, b) => inTimeOrder(a.value, b.value))
      for (const { key, value } of values) {
        const k = keyText(key)
        let row = rows.get(k)
        if (!row) { row = emptyParamRow(key, value); rows.set(k, row) }
        addValue(row, value)
        touched.add(k)
      }
      const written = [...touched].map((k) => rows.get(k)!)
      await writeParamRows(trx, written)
      await addValuesToBins(trx, values)
      await forgetQueuedRuns(trx, runIds)
      // a reader repairs once its last slice is in, not after every slice
      if (repair && runIds.length < RUNS_PER_FOLD) stale = await staleParamRows(trx, lotId)
    }
    // a value older than the row's latest arrived: the moving range is taken again in test order
    for (const key of stale) {
      const values = await foldedSampleValues(trx, key)
      await writeMovingRange(trx, key, movingRangeSum(values.map((v) => v.value)), values.at(-1))
    }
    // a run that became a unit's first attempt moved values into or out of the sample
    for (const m of marks) {
      await rebuildParamRows(trx, m)
      await forgetRebuildMark(trx, m)
    }
    await rebuildMarkedBins(trx, marks)
    // the product's alert rules look at the new results; last, so the product's mark row is held only until commit
    if (runIds.length || marks.length) await markProductOfLot(trx, lotId)
    await markFolded(trx, lotId)
    return { folded: runIds.length, more: runIds.length === RUNS_PER_FOLD }
  })
}

async function withRetries<T>(work: () => Promise<T>): Promise<T> {
  for (let tries = 1; ; tries++) {
    try {
      return await work()
    } catch (e: any) {
      if (!(e?.code === 'ER_LOCK_DEADLOCK' && tries < RETRIES)) throw e
    }
  }
}

/** Folds one lot's queue; a background fold gives way when another fold of the lot is running. */
async function foldLot(db: Knex, lotId: number, background: boolean): Promise<number | 'busy'> {
  // a reader folds what was queued when it asked, not what keeps arriving while it folds
  const upTo = background ? undefined : (await newestQueuedRun(db, lotId)) ?? undefined
  let total = 0
  for (;;) {
    const slice = await withRetries(() => foldSlice(db, lotId, background ? 0 : READER_WAIT_SECONDS, !background, upTo))
    if (slice === 'missing') { await ensureFoldLease(db, lotId); continue }
    if (slice === 'busy') return total || 'busy'
    total += slice.folded
    if (!slice.more) return total
  }
}

/**
 * Folds every queued run of the given lots (or, in the background, of the lots that have any). A background fold
 * skips a lot another fold is working on; any other waits for it. Returns how many runs were folded.
 */
export async function foldPendingStats(db: Knex, opts: { lotIds?: number[]; background?: boolean } = {}): Promise<number> {
  const lots = opts.lotIds ?? await lotsToFold(db, LOTS_PER_PASS)
  let total = 0
  for (const lotId of lots) {
    const n = await foldLot(db, lotId, !!opts.background)
    if (n !== 'busy') total += n
  }
  return total
}

/**
 * Brings the lots' parameter rows up to date before a reader reads them: runs queued so far are folded in, rows a
 * late run left for a rebuild are recomputed and stale moving ranges are taken again. Answers 503 when a fold of the lot holds its lease too long.
 */
export async function freshenLotStats(db: Knex, lotIds: number[]): Promise<void> {
  for (const lotId of lotIds) {
    const [queued, marked, stale] = await Promise.all([newestQueuedRun(db, lotId), anyRebuildMarks(db, lotId), anyStaleParamRows(db, lotId)])
    if (queued === null && !marked && !stale) continue
    try {
      await foldLot(db, lotId, false)
    } catch (e: any) {
      if (e?.code === 'ER_LOCK_WAIT_TIMEOUT') throw new RetryLater('The lot statistics are being updated; retry in a moment.')
      throw e
    }
  }
}

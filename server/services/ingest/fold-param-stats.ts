// Folds queued runs into the lot × revision × station parameter rows, many runs per transaction. Each run's own
// transaction only queues it (one small row), so stations posting into one lot never wait on the statistics rows,
// and the database updates each row once per fold instead of once per run. A fold holds its lot's lease row for the
// length of its transaction: folds of one lot take turns, folds of different lots run side by side. Readers fold
// their lot first, up to the newest run queued when they asked; heavy repairs are left to the background.
import type { Knex } from 'knex'
import { markProductOfLot } from '../../database/repositories/alert-marks'
import { ensureFoldLease, lotsToFold, markFolded, takeFoldLease } from '../../database/repositories/fold-leases'
import {
  forgetQueuedRuns, forgetRebuildMark, paramRowsOfLot, queuedRunsOfLot, rebuildMarksOfLot, rebuildParamRows, valuesOfRuns, writeParamRows,
} from '../../database/repositories/param-stats'
import { addValuesToBins, rebuildMarkedBins } from './fold-bins'
import { addValue, emptyParamRow, inTimeOrder, type ParamRow, type ParamRowKey } from './param-stats-merge'
import { foldTrendValues, queueStaleGroups, repairQueuedGroups } from './param-trend-fold'
import { queueRepairsOfRevision } from '../../database/repositories/param-trend'
import { lotBacklog, rebuildSize, smallRepairsWaiting, type LotBacklog } from './fold-backlog'
import { writeTransaction } from '../../database/write-retries'

const RUNS_PER_FOLD = 500
// a reader tries its lot's lease for this long (TERCET_READER_FOLD_WAIT_MS), then reads the rows as they stand and
// says what they leave out: a view never queues behind a long background slice. The lease is tried without waiting
// (SKIP LOCKED) every READER_RETRY_MS, because a lock wait can only be set in whole seconds.
const READER_WAIT_MS = 250
const READER_RETRY_MS = 20
// a reader folds at most this many queued runs itself; a longer queue (after a bulk load or an outage) is left to
// the background, and the view says how many runs its figures leave out
const READER_MAX_RUNS = 2_000
const ASKED_WAIT_SECONDS = 5
// a reader rebuilds or repairs a group itself only up to this many values (one index range, some tens of ms);
// larger ones are left to the background fold
const READER_REPAIR_VALUES = 20_000
const LOTS_PER_PASS = 50
// repairs of one slice stop after reading this many values (a few groups of a large lot, well under a second), so
// the background holds a lot's lease only briefly and readers asking meanwhile wait little
const REPAIR_VALUES_PER_SLICE = 200_000

const keyText = (k: ParamRowKey) => `${k.step}\u0000${k.name}\u0000${k.qualifier}\u0000${k.revisionId}\u0000${k.stationId}`

type Slice = { folded: number; more: boolean } | 'busy' | 'missing'

/**
 * One transaction on one lot: take its lease, add up to RUNS_PER_FOLD queued runs to its rows (both populations and
 * the drift sums), drop them from the queue, recompute the rows marked for rebuild, and once the last slice is in,
 * repair the groups whose moving ranges or drift sums late values left stale. Marks and repairs larger than
 * `maxRepairValues` are left for a later fold (a reader's limit; the background's is unbounded).
 */
async function foldSlice(db: Knex, lotId: number, waitSeconds: number, maxRepairValues: number, upTo?: number): Promise<Slice> {
  return writeTransaction(db, async (trx) => {
    const lease = await takeFoldLease(trx, lotId, waitSeconds)
    if (lease !== 'taken') return lease
    const runIds = await queuedRunsOfLot(trx, lotId, RUNS_PER_FOLD, upTo)
    const marks = await rebuildMarksOfLot(trx, lotId, { forUpdate: true })
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
      await foldTrendValues(trx, lotId, values)
      await queueStaleGroups(trx, written)
      await forgetQueuedRuns(trx, runIds)
    }
    // a run that became a unit's first attempt moved values into or out of the sample
    const rebuiltMarks = []
    for (const m of marks) {
      if (maxRepairValues !== Infinity && await rebuildSize(trx, m) > maxRepairValues) continue
      await rebuildParamRows(trx, m)
      await queueRepairsOfRevision(trx, m.lotId, m.step, m.revisionId)
      await forgetRebuildMark(trx, m)
      rebuiltMarks.push(m)
    }
    const rebuilt = rebuiltMarks.length
    await rebuildMarkedBins(trx, rebuiltMarks)
    // once the last slice is in (not after every slice), late values' moving ranges and drift sums are taken again
    const last = runIds.length < RUNS_PER_FOLD
    const repairs = last ? await repairQueuedGroups(trx, lotId, maxRepairValues, REPAIR_VALUES_PER_SLICE) : { repaired: 0, more: false }
    if (!runIds.length && !rebuilt && !repairs.repaired) return { folded: 0, more: false }
    // the product's alert rules look at the new results; last, so the product's mark row is held only until commit
    if (runIds.length || rebuilt) await markProductOfLot(trx, lotId)
    await markFolded(trx, lotId)
    return { folded: runIds.length, more: !last || repairs.more }
  })
}

/**
 * How a fold of one lot goes: how long it waits on the lease (0: skip a lot another fold holds), until when it tries
 * the lease again instead of giving way, how large a rebuild or repair it does itself, which queued runs it takes
 * (up to `upTo`) and after how many runs it leaves the rest.
 */
type FoldTerms = { waitSeconds: number; retryUntil?: number; maxRepairValues: number; upTo?: number; maxRuns?: number }

const BACKGROUND: FoldTerms = { waitSeconds: 0, maxRepairValues: Infinity }
// a fold asked for outside a view (tests, tools) waits for one in progress
const ASKED: FoldTerms = { waitSeconds: ASKED_WAIT_SECONDS, maxRepairValues: READER_REPAIR_VALUES }

/** Folds one lot's queue by slices on the given terms; 'busy' when another fold held the lease throughout. */
async function foldLot(db: Knex, lotId: number, terms: FoldTerms): Promise<number | 'busy'> {
  let total = 0
  for (;;) {
    // two folds of one lot on two cluster nodes conflict at commit; writeTransaction runs the loser again
    const slice = await foldSlice(db, lotId, terms.waitSeconds, terms.maxRepairValues, terms.upTo)
    if (slice === 'missing') { await ensureFoldLease(db, lotId); continue }
    if (slice === 'busy') {
      if (terms.retryUntil === undefined || Date.now() >= terms.retryUntil) return total || 'busy'
      await new Promise((r) => setTimeout(r, READER_RETRY_MS))
      continue
    }
    total += slice.folded
    if (!slice.more || total >= (terms.maxRuns ?? Infinity)) return total
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
    const n = await foldLot(db, lotId, opts.background ? BACKGROUND : ASKED)
    if (n !== 'busy') total += n
  }
  return total
}

/** How long a reader tries its lot's lease (TERCET_READER_FOLD_WAIT_MS, default READER_WAIT_MS). */
export function readerWaitMs(): number {
  const n = Number(process.env.TERCET_READER_FOLD_WAIT_MS)
  return Number.isFinite(n) && n >= 0 ? n : READER_WAIT_MS
}

/**
 * Brings the lots' parameter rows up to date before a reader reads them: runs queued so far are folded in, and rows
 * a late run left for a rebuild or a repair are recomputed when small. A reader folds at most what was queued when it
 * asked (and at most READER_MAX_RUNS runs), tries its lot's lease for `waitMs` at most, and leaves large rebuilds
 * and repairs to the background: it answers with what its lot's rows do not include yet, so the view can say so.
 */
export async function freshenLotStats(db: Knex, lotIds: number[], waitMs = readerWaitMs()): Promise<LotBacklog[]> {
  const asked = new Date()
  const result: LotBacklog[] = []
  for (const lotId of lotIds) {
    const before = await lotBacklog(db, lotId, asked)
    // nothing queued and nothing small enough for a reader: the background has it, no need to try the lease
    if (!before.runs && !(await smallRepairsWaiting(db, lotId, READER_REPAIR_VALUES))) { result.push(before); continue }
    try {
      // what was queued when the reader asked, not what keeps arriving while it folds
      await foldLot(db, lotId, { waitSeconds: 0, retryUntil: Date.now() + waitMs, maxRepairValues: READER_REPAIR_VALUES, upTo: before.upTo ?? 0, maxRuns: READER_MAX_RUNS })
    } catch (e: any) {
      // a row lock other than the lease held past the lock wait: the rows are read as they are
      if (e?.code !== 'ER_LOCK_WAIT_TIMEOUT') throw e
    }
    result.push(await lotBacklog(db, lotId, asked, before.upTo))
  }
  return result
}

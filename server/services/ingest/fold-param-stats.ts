// Folds queued runs into the lot × station parameter rows, many runs per transaction. Each run's own transaction
// only queues it (one small row), so 32 stations posting into one lot never wait on the statistics rows, and the
// database updates each row once per fold instead of once per run. Readers fold their lot first, so what they show
// includes every stored run.
import type { Knex } from 'knex'
import { anyPendingRuns, claimPendingRuns, forgetPendingRuns, lockParamRows, valuesOfRuns, writeParamRows } from '../../database/repositories/param-stats'
import { addValue, emptyParamRow, inTimeOrder, type ParamRow, type ParamRowKey } from './param-stats-merge'

const RUNS_PER_FOLD = 500
const RETRIES = 3

const keyText = (k: ParamRowKey) => `${k.lotId}\u0000${k.step}\u0000${k.name}\u0000${k.qualifier}\u0000${k.stationId}`

const BACKGROUND_LOCK = 'tercet_param_stats_fold'

/** One transaction: claim queued runs, add their measurements to the rows, drop them from the queue. */
async function foldOnce(db: Knex, opts: { lotIds?: number[]; skipLocked: boolean }): Promise<number> {
  return db.transaction(async (trx) => {
    if (!opts.skipLocked) return foldIn(trx, opts)
    // one background folder at a time across processes: two would lock the same lot rows and deadlock
    const [[got]] = await trx.raw('SELECT GET_LOCK(?, 0) AS got', [BACKGROUND_LOCK])
    if (Number(got.got) !== 1) return 0
    try {
      return await foldIn(trx, opts)
    } finally {
      await trx.raw('DO RELEASE_LOCK(?)', [BACKGROUND_LOCK])
    }
  })
}

async function foldIn(trx: Knex.Transaction, opts: { lotIds?: number[]; skipLocked: boolean }): Promise<number> {
  const pending = await claimPendingRuns(trx, { limit: RUNS_PER_FOLD, lotIds: opts.lotIds, skipLocked: opts.skipLocked })
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

/**
 * Folds every queued run (of the given lots, or all), waiting for runs another folder holds unless `background`.
 * Returns how many runs were folded.
 */
export async function foldPendingStats(db: Knex, opts: { lotIds?: number[]; background?: boolean } = {}): Promise<number> {
  if (!(await anyPendingRuns(db, opts.lotIds))) return 0
  let total = 0
  for (let tries = 0; ;) {
    try {
      const n = await foldOnce(db, { lotIds: opts.lotIds, skipLocked: !!opts.background })
      total += n
      if (n < RUNS_PER_FOLD) return total
    } catch (e: any) {
      if ((e?.code === 'ER_LOCK_DEADLOCK' || e?.code === 'ER_LOCK_WAIT_TIMEOUT') && ++tries < RETRIES) continue
      throw e
    }
  }
}

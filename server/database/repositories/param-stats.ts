// The lot × station parameter rows and the queue of runs not yet folded into them.
import type { Knex } from 'knex'
import type { ParamRow, ParamRowKey, StoredValue } from '../../services/ingest/param-stats-merge'

export type PendingRun = { runId: number; lotId: number }

/** Locks up to `limit` queued runs, oldest first (the caller holds the statistics lock). */
export async function claimPendingRuns(trx: Knex.Transaction, opts: { limit: number; lotIds?: number[] }): Promise<PendingRun[]> {
  let q = trx('lot_stats_pending').orderBy('run_id').limit(opts.limit).forUpdate()
  if (opts.lotIds) q = q.whereIn('lot_id', opts.lotIds)
  const rows = await q.select('run_id', 'lot_id')
  return rows.map((r: any) => ({ runId: Number(r.run_id), lotId: Number(r.lot_id) }))
}

export async function anyPendingRuns(db: Knex, lotIds?: number[]): Promise<boolean> {
  let q = db('lot_stats_pending').first('run_id')
  if (lotIds) q = q.whereIn('lot_id', lotIds)
  return (await q) !== undefined
}

/** Rows of the given lots whose moving range must be recomputed from the measurements. */
export async function staleParamRowKeys(db: Knex, lotIds: number[]): Promise<ParamRowKey[]> {
  if (!lotIds.length) return []
  const rows = await db('lot_param_stats').whereIn('lot_id', lotIds).andWhere('mr_stale', true).select('lot_id', 'step', 'name', 'qualifier', 'revision_id', 'station_id')
  return rows.map((r: any) => ({ lotId: Number(r.lot_id), step: r.step, name: r.name, qualifier: Number(r.qualifier), revisionId: Number(r.revision_id), stationId: Number(r.station_id) }))
}

export async function forgetPendingRuns(trx: Knex.Transaction, runIds: number[]): Promise<void> {
  if (runIds.length) await trx('lot_stats_pending').whereIn('run_id', runIds).del()
}

export type ValueOfRow = { key: ParamRowKey; value: StoredValue }

/** The stored measurements of the given runs, with what each parameter row needs of them. */
export async function valuesOfRuns(trx: Knex.Transaction, runIds: number[]): Promise<ValueOfRow[]> {
  if (!runIds.length) return []
  const rows = await trx('measurements').whereIn('run_id', runIds)
    .select('id', 'lot_id', 'step', 'name', 'qualifier', 'revision_id', 'station_id', 'unit', 'value', 'first_attempt', 'implausible', 'started_at', 'lsl', 'usl', 'verdict')
  return rows.map((r: any) => ({
    key: { lotId: Number(r.lot_id), step: r.step, name: r.name, qualifier: Number(r.qualifier), revisionId: Number(r.revision_id), stationId: Number(r.station_id) },
    value: {
      value: Number(r.value), unit: r.unit, firstAttempt: !!r.first_attempt, startedAt: new Date(r.started_at).getTime(), id: Number(r.id),
      lsl: r.lsl == null ? null : Number(r.lsl), usl: r.usl == null ? null : Number(r.usl), failed: r.verdict === 'fail', implausible: !!r.implausible,
    },
  }))
}

/** One lot_param_stats row as the fold and the readers use it. */
export function paramRowFromDb(r: any): ParamRow {
  return {
    lotId: Number(r.lot_id), step: r.step, name: r.name, qualifier: Number(r.qualifier), revisionId: Number(r.revision_id), stationId: Number(r.station_id), unit: r.unit,
    n: Number(r.n), shift: Number(r.shift), sumD: Number(r.sum_d), sumSqD: Number(r.sumsq_d), min: Number(r.min_value), max: Number(r.max_value),
    mrSum: Number(r.mr_sum), mrN: Number(r.mr_n), lastValue: r.last_value == null ? null : Number(r.last_value),
    lastStartedAt: r.last_started_at == null ? null : new Date(r.last_started_at).getTime(), mrStale: !!r.mr_stale,
    outOfSpec: Number(r.out_of_spec), failAll: Number(r.fail_all),
  }
}

/** The parameter rows of the given lots, locked for the fold's update. */
export async function lockParamRows(trx: Knex.Transaction, lotIds: number[]): Promise<ParamRow[]> {
  if (!lotIds.length) return []
  return (await trx('lot_param_stats').whereIn('lot_id', lotIds).forUpdate()).map(paramRowFromDb)
}

const COLUMNS = ['lot_id', 'step', 'name', 'qualifier', 'revision_id', 'station_id', 'unit', 'n', 'shift', 'sum_d', 'sumsq_d', 'min_value', 'max_value',
  'mr_sum', 'mr_n', 'last_value', 'last_started_at', 'mr_stale', 'out_of_spec', 'fail_all']
const ROWS_PER_STATEMENT = 1000

/** Writes whole rows back: new ones are inserted, existing ones take the values computed under their lock. */
export async function writeParamRows(trx: Knex.Transaction, rows: ParamRow[]): Promise<void> {
  const tuple = `(${COLUMNS.map(() => '?').join(', ')})`
  const tail = COLUMNS.slice(6).map((c) => `${c} = VALUES(${c})`).join(', ')
  for (let i = 0; i < rows.length; i += ROWS_PER_STATEMENT) {
    const part = rows.slice(i, i + ROWS_PER_STATEMENT)
    const values = part.flatMap((r) => [r.lotId, r.step, r.name, r.qualifier, r.revisionId, r.stationId, r.unit, r.n, r.shift, r.sumD, r.sumSqD, r.min, r.max,
      r.mrSum, r.mrN, r.lastValue, r.lastStartedAt === null ? null : new Date(r.lastStartedAt), r.mrStale, r.outOfSpec, r.failAll])
    await trx.raw(`INSERT INTO lot_param_stats (${COLUMNS.join(', ')}) VALUES ${part.map(() => tuple).join(', ')} ON DUPLICATE KEY UPDATE ${tail}`, values)
  }
}

const rowWhere = (k: ParamRowKey) => ({ lot_id: k.lotId, step: k.step, name: k.name, qualifier: k.qualifier, revision_id: k.revisionId, station_id: k.stationId })

/** Locks one parameter row and says whether a late arrival left its moving range stale. */
export async function lockStaleRow(trx: Knex.Transaction, key: ParamRowKey): Promise<boolean> {
  return !!(await trx('lot_param_stats').where(rowWhere(key)).forUpdate().first('mr_stale'))?.mr_stale
}

/** The row's first-attempt values in test order, leaving out runs still queued for the fold (it applies them after). */
export async function foldedFirstAttemptValues(trx: Knex.Transaction, key: ParamRowKey): Promise<{ value: number; startedAt: Date }[]> {
  const rows = await trx('measurements').where({ ...rowWhere(key), first_attempt: true, implausible: false })
    .whereNotIn('run_id', trx('lot_stats_pending').where({ lot_id: key.lotId }).select('run_id'))
    .orderBy('started_at').orderBy('id').select('value', 'started_at')
  return rows.map((r: any) => ({ value: Number(r.value), startedAt: r.started_at }))
}

export async function writeMovingRange(trx: Knex.Transaction, key: ParamRowKey, mr: { sum: number; count: number }, last: { value: number; startedAt: Date } | undefined): Promise<void> {
  await trx('lot_param_stats').where(rowWhere(key))
    .update({ mr_sum: mr.sum, mr_n: mr.count, last_value: last?.value ?? null, last_started_at: last?.startedAt ?? null, mr_stale: false })
}

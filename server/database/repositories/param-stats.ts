// The lot × revision × station parameter rows, the queue of runs not yet folded into them, and the rows a late run
// left to be rebuilt.
import type { Knex } from 'knex'
import { numberLiteral, textLiteral, utcLiteral } from '../sql-literals'
import type { ParamRow, ParamRowKey, StoredValue } from '../../../shared/types/param-stats'

/** Up to `limit` queued runs of one lot, oldest first, none newer than `upTo` when given (the caller holds the lot's lease). */
export async function queuedRunsOfLot(trx: Knex.Transaction, lotId: number, limit: number, upTo?: number): Promise<number[]> {
  let q = trx('lot_stats_pending').where({ lot_id: lotId }).orderBy('run_id').limit(limit)
  if (upTo !== undefined) q = q.andWhere('run_id', '<=', upTo)
  return (await q.select('run_id')).map((r: any) => Number(r.run_id))
}

export async function forgetQueuedRuns(trx: Knex.Transaction, runIds: number[]): Promise<void> {
  if (runIds.length) await trx('lot_stats_pending').whereIn('run_id', runIds).del()
}

export type ValueOfRow = { key: ParamRowKey; value: StoredValue }

/** The stored measurements of the given runs, with what each parameter row needs of them. */
export async function valuesOfRuns(trx: Knex.Transaction, runIds: number[]): Promise<ValueOfRow[]> {
  if (!runIds.length) return []
  // the start as milliseconds (the session is in UTC): a number read, rather than a date parsed, for every value
  const rows = await trx('measurements').whereIn('run_id', runIds)
    .select('id', 'lot_id', 'step', 'name', 'qualifier', 'revision_id', 'station_id', 'unit', 'value', 'first_attempt', 'implausible', 'lsl', 'usl', 'verdict',
      trx.raw("TIMESTAMPDIFF(MICROSECOND, '1970-01-01 00:00:00', started_at) DIV 1000 AS started_ms"))
  return rows.map((r: any) => ({
    key: { lotId: Number(r.lot_id), step: r.step, name: r.name, qualifier: Number(r.qualifier), revisionId: Number(r.revision_id), stationId: Number(r.station_id) },
    value: {
      value: Number(r.value), unit: r.unit, firstAttempt: !!r.first_attempt, startedAt: Number(r.started_ms), id: Number(r.id),
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
    aN: Number(r.a_n), aShift: Number(r.a_shift), aSumD: Number(r.a_sum_d), aSumSqD: Number(r.a_sumsq_d), aMin: Number(r.a_min_value), aMax: Number(r.a_max_value),
    aMrSum: Number(r.a_mr_sum), aMrN: Number(r.a_mr_n), aLastValue: r.a_last_value == null ? null : Number(r.a_last_value),
    aLastStartedAt: r.a_last_started_at == null ? null : new Date(r.a_last_started_at).getTime(), aMrStale: !!r.a_mr_stale, aOutOfSpec: Number(r.a_out_of_spec),
  }
}

/** The parameter rows of one lot, of the given stations only (its fold lease is held, so nobody else writes them). */
export async function paramRowsOfLot(trx: Knex.Transaction, lotId: number, stationIds: number[]): Promise<ParamRow[]> {
  if (!stationIds.length) return []
  return (await trx('lot_param_stats').where({ lot_id: lotId }).whereIn('station_id', stationIds)).map(paramRowFromDb)
}

const COLUMNS = ['lot_id', 'step', 'name', 'qualifier', 'revision_id', 'station_id', 'unit', 'n', 'shift', 'sum_d', 'sumsq_d', 'min_value', 'max_value',
  'mr_sum', 'mr_n', 'last_value', 'last_started_at', 'mr_stale', 'out_of_spec', 'fail_all',
  'a_n', 'a_shift', 'a_sum_d', 'a_sumsq_d', 'a_min_value', 'a_max_value', 'a_mr_sum', 'a_mr_n', 'a_last_value', 'a_last_started_at', 'a_mr_stale', 'a_out_of_spec']
const ROWS_PER_STATEMENT = 1000

/** Writes whole rows back: new ones are inserted, existing ones take the values computed under the lease. */
export async function writeParamRows(trx: Knex.Transaction, rows: ParamRow[]): Promise<void> {
  const tail = COLUMNS.slice(6).map((c) => `${c} = VALUES(${c})`).join(', ')
  const time = (ms: number | null) => ms === null ? 'NULL' : utcLiteral(new Date(ms))
  // every value a literal: a fold writes some thirty values for each of hundreds of rows
  const tuple = (r: ParamRow) => `(${r.lotId},${textLiteral(r.step)},${textLiteral(r.name)},${numberLiteral(r.qualifier)},${r.revisionId},${r.stationId},${textLiteral(r.unit)},`
    + `${r.n},${numberLiteral(r.shift)},${numberLiteral(r.sumD)},${numberLiteral(r.sumSqD)},${numberLiteral(r.min)},${numberLiteral(r.max)},${numberLiteral(r.mrSum)},${r.mrN},`
    + `${numberLiteral(r.lastValue)},${time(r.lastStartedAt)},${r.mrStale ? 1 : 0},${r.outOfSpec},${r.failAll},`
    + `${r.aN},${numberLiteral(r.aShift)},${numberLiteral(r.aSumD)},${numberLiteral(r.aSumSqD)},${numberLiteral(r.aMin)},${numberLiteral(r.aMax)},${numberLiteral(r.aMrSum)},${r.aMrN},`
    + `${numberLiteral(r.aLastValue)},${time(r.aLastStartedAt)},${r.aMrStale ? 1 : 0},${r.aOutOfSpec})`
  for (let i = 0; i < rows.length; i += ROWS_PER_STATEMENT) {
    const part = rows.slice(i, i + ROWS_PER_STATEMENT)
    if (!part.every((r) => [r.lotId, r.revisionId, r.stationId, r.n, r.mrN, r.outOfSpec, r.failAll, r.aN, r.aMrN, r.aOutOfSpec].every(Number.isInteger))) throw new TypeError('statistics row keys and counts must be integers')
    await trx.raw(`INSERT INTO lot_param_stats (${COLUMNS.join(', ')}) VALUES ${part.map(tuple).join(',')} ON DUPLICATE KEY UPDATE ${tail}`)
  }
}

export type RebuildScope = { lotId: number; step?: string; revisionId?: number; stationId?: number }

const PARTITION = 'PARTITION BY step, name, qualifier, revision_id, station_id'
// the sample: plausible first attempts
const SAMPLE = '(first_attempt AND NOT implausible)'
const OUT_OF_SPEC = '((lsl IS NOT NULL AND value < lsl) OR (usl IS NOT NULL AND value > usl))'

/**
 * Recomputes the parameter rows of a lot (or of one step, revision and station of it), both populations, from the
 * stored measurements. Runs still queued for the fold are left out, and left in the queue, so the fold adds them once.
 */
export async function rebuildParamRows(trx: Knex.Transaction, scope: RebuildScope): Promise<void> {
  const where: Record<string, string | number> = { lot_id: scope.lotId }
  if (scope.step !== undefined) where.step = scope.step
  if (scope.revisionId !== undefined) where.revision_id = scope.revisionId
  if (scope.stationId !== undefined) where.station_id = scope.stationId
  await trx('lot_param_stats').where(where).del()
  const cond = Object.keys(where).map((c) => `${c} = ?`).join(' AND ')
  const vals = Object.values(where)
  await trx.raw(
    `INSERT INTO lot_param_stats (lot_id, step, name, qualifier, revision_id, station_id, unit, n, shift, sum_d, sumsq_d, min_value, max_value,
       mr_sum, mr_n, last_value, last_started_at, mr_stale, out_of_spec, fail_all,
       a_n, a_shift, a_sum_d, a_sumsq_d, a_min_value, a_max_value, a_mr_sum, a_mr_n, a_last_value, a_last_started_at, a_mr_stale, a_out_of_spec)
     SELECT ?, step, name, qualifier, revision_id, station_id, MIN(unit), SUM(sample), COALESCE(MIN(shift), MIN(value)),
       COALESCE(SUM(IF(sample, value - shift, 0)), 0), COALESCE(SUM(IF(sample, (value - shift) * (value - shift), 0)), 0),
       COALESCE(MIN(IF(sample, value, NULL)), MIN(value)), COALESCE(MAX(IF(sample, value, NULL)), MAX(value)),
       COALESCE(SUM(mr), 0), COUNT(mr), MAX(last_value), MAX(IF(sample, started_at, NULL)), 0,
       SUM(sample AND ${OUT_OF_SPEC}), SUM(verdict = 'fail'),
       SUM(plausible), COALESCE(MIN(a_shift), MIN(value)),
       COALESCE(SUM(IF(plausible, value - a_shift, 0)), 0), COALESCE(SUM(IF(plausible, (value - a_shift) * (value - a_shift), 0)), 0),
       COALESCE(MIN(IF(plausible, value, NULL)), MIN(value)), COALESCE(MAX(IF(plausible, value, NULL)), MAX(value)),
       COALESCE(SUM(a_mr), 0), COUNT(a_mr), MAX(a_last_value), MAX(IF(plausible, started_at, NULL)), 0, SUM(plausible AND ${OUT_OF_SPEC})
     FROM (
       SELECT step, name, qualifier, revision_id, station_id, unit, value, lsl, usl, verdict, started_at, ${SAMPLE} AS sample, NOT implausible AS plausible,
         AVG(IF(${SAMPLE}, value, NULL)) OVER (${PARTITION}) AS shift,
         IF(${SAMPLE}, ABS(value - LAG(value) OVER (${PARTITION}, ${SAMPLE} ORDER BY started_at, id)), NULL) AS mr,
         IF(${SAMPLE} AND ROW_NUMBER() OVER (${PARTITION}, ${SAMPLE} ORDER BY started_at DESC, id DESC) = 1, value, NULL) AS last_value,
         AVG(IF(NOT implausible, value, NULL)) OVER (${PARTITION}) AS a_shift,
         IF(NOT implausible, ABS(value - LAG(value) OVER (${PARTITION}, implausible ORDER BY started_at, id)), NULL) AS a_mr,
         IF(NOT implausible AND ROW_NUMBER() OVER (${PARTITION}, implausible ORDER BY started_at DESC, id DESC) = 1, value, NULL) AS a_last_value
       FROM measurements WHERE ${cond} AND run_id NOT IN (SELECT run_id FROM lot_stats_pending WHERE lot_id = ?)
     ) t
     GROUP BY step, name, qualifier, revision_id, station_id`, [scope.lotId, ...vals, scope.lotId])
}

export type RebuildMark = { lotId: number; step: string; revisionId: number; stationId: number }

/**
 * The lot's rebuild marks. A fold takes them `forUpdate`: a write that marks the same rows again while the fold
 * recomputes them then waits until the fold has dropped the old mark, so its own mark survives for the next fold.
 */
export async function rebuildMarksOfLot(trx: Knex, lotId: number, opts: { forUpdate?: boolean } = {}): Promise<RebuildMark[]> {
  const q = trx('lot_stats_rebuild').where({ lot_id: lotId }).select('lot_id', 'step', 'revision_id', 'station_id')
  const rows = await (opts.forUpdate ? q.forUpdate() : q)
  return rows.map((r: any) => ({ lotId: Number(r.lot_id), step: r.step, revisionId: Number(r.revision_id), stationId: Number(r.station_id) }))
}

export async function forgetRebuildMark(trx: Knex.Transaction, m: RebuildMark): Promise<void> {
  await trx('lot_stats_rebuild').where({ lot_id: m.lotId, step: m.step, revision_id: m.revisionId, station_id: m.stationId }).del()
}

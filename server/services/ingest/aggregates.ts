// Incremental lot aggregates, updated in the run's own transaction. One row per station keeps
// concurrent stations off each other's rows; readers add the station rows together.
import type { Knex } from 'knex'
import type { JudgedMeasurement } from './judge-run'
import { repeatedTuples } from '../../database/raw-connection'

function flatten(rows: Knex.RawBinding[][]): Knex.RawBinding[] {
  const out: Knex.RawBinding[] = []
  for (const r of rows) for (let i = 0; i < r.length; i++) out.push(r[i]!)
  return out
}

export type AggregateContext = { lotId: number; stationId: number; step: string; attempt: number; startedAt: Date }

export type Statement = { sql: string; values: Knex.RawBinding[] }

const STEP_STATS_HEAD = 'INSERT INTO lot_step_stats (lot_id, step, station_id, runs, units, first_pass, latest_pass) VALUES '
const STEP_STATS_TUPLE = '(?, ?, ?, 1, ?, ?, ?)'
const STEP_STATS_TAIL = `
     ON DUPLICATE KEY UPDATE runs = runs + 1, units = units + VALUES(units), first_pass = first_pass + VALUES(first_pass), latest_pass = latest_pass + VALUES(latest_pass)`

/** Yield counters: units and first-pass on attempt 1; the latest verdict moves with every retest. */
export function stepStatsValues(ctx: AggregateContext, verdict: 'pass' | 'fail', previousLatest: 'pass' | 'fail' | null): Knex.RawBinding[] {
  const pass = verdict === 'pass' ? 1 : 0
  const first = ctx.attempt === 1
  const latestDelta = first ? pass : pass - (previousLatest === 'pass' ? 1 : 0)
  return [ctx.lotId, ctx.step, ctx.stationId, first ? 1 : 0, first ? pass : 0, latestDelta]
}

export function stepStatsStatement(ctx: AggregateContext, verdict: 'pass' | 'fail', previousLatest: 'pass' | 'fail' | null): Statement {
  return stepStatsStatementMany([stepStatsValues(ctx, verdict, previousLatest)])
}

/** Several runs' step rows in one upsert; the rows are applied one after another, in the given order. */
export function stepStatsStatementMany(rows: Knex.RawBinding[][]): Statement {
  return { sql: STEP_STATS_HEAD + rows.map(() => STEP_STATS_TUPLE).join(', ') + STEP_STATS_TAIL, values: rows.flat() }
}

export async function updateStepStats(trx: Knex, ctx: AggregateContext, verdict: 'pass' | 'fail', previousLatest: 'pass' | 'fail' | null): Promise<void> {
  const st = stepStatsStatement(ctx, verdict, previousLatest)
  await trx.raw(st.sql, st.values)
}

// MariaDB applies ON DUPLICATE KEY assignments left to right, each seeing the columns already updated,
// so the moving-range terms are computed before last_value / last_started_at move on, and n last.
const PARAM_UPSERT_TAIL = `
ON DUPLICATE KEY UPDATE
  min_value = IF(VALUES(n) = 0, min_value, IF(n = 0, VALUES(min_value), LEAST(min_value, VALUES(min_value)))),
  max_value = IF(VALUES(n) = 0, max_value, IF(n = 0, VALUES(max_value), GREATEST(max_value, VALUES(max_value)))),
  sum_d = sum_d + VALUES(n) * (VALUES(shift) - shift),
  sumsq_d = sumsq_d + VALUES(n) * (VALUES(shift) - shift) * (VALUES(shift) - shift),
  mr_stale = IF(VALUES(n) = 1 AND last_started_at IS NOT NULL AND VALUES(last_started_at) < last_started_at, 1, mr_stale),
  mr_sum = IF(VALUES(n) = 1 AND last_started_at IS NOT NULL AND VALUES(last_started_at) >= last_started_at, mr_sum + ABS(VALUES(shift) - last_value), mr_sum),
  mr_n = IF(VALUES(n) = 1 AND last_started_at IS NOT NULL AND VALUES(last_started_at) >= last_started_at, mr_n + 1, mr_n),
  last_value = IF(VALUES(n) = 1 AND (last_started_at IS NULL OR VALUES(last_started_at) >= last_started_at), VALUES(shift), last_value),
  last_started_at = IF(VALUES(n) = 1 AND (last_started_at IS NULL OR VALUES(last_started_at) >= last_started_at), VALUES(last_started_at), last_started_at),
  n = n + VALUES(n),
  out_of_spec = out_of_spec + VALUES(out_of_spec),
  fail_all = fail_all + VALUES(fail_all)`

/** Per-parameter sums (first attempts) and failure counts (all attempts), one multi-row statement per run. */
export async function updateParamStats(trx: Knex, ctx: AggregateContext, ms: JudgedMeasurement[]): Promise<void> {
  const st = paramStatsStatement(ctx, ms)
  if (st) await trx.raw(st.sql, st.values)
}

export function paramStatsStatement(ctx: AggregateContext, ms: JudgedMeasurement[]): Statement | undefined {
  const rows = paramStatsRows(ctx, ms)
  return rows.length ? paramStatsStatementMany(rows) : undefined
}

export function paramStatsRows(ctx: AggregateContext, ms: JudgedMeasurement[]): Knex.RawBinding[][] {
  const first = ctx.attempt === 1 ? 1 : 0
  return ms.filter((m) => Number.isFinite(m.value)).map((m) => [ctx.lotId, ctx.step, m.name, m.qualifier, ctx.stationId, m.unit, first, m.value, m.value, m.value,
    first ? m.value : null, first ? ctx.startedAt : null, first && m.outOfSpec ? 1 : 0, m.verdict === 'fail' ? 1 : 0])
}

const PARAM_TUPLE = '(?, ?, ?, ?, ?, ?, ?, ?, 0, 0, ?, ?, 0, 0, ?, ?, 0, ?, ?)'

/** Parameter rows of one or several runs in one upsert, applied row by row in the given order. */
export function paramStatsStatementMany(rows: Knex.RawBinding[][]): Statement {
  return {
    sql: `INSERT INTO lot_param_stats (lot_id, step, name, qualifier, station_id, unit, n, shift, sum_d, sumsq_d, min_value, max_value,
       mr_sum, mr_n, last_value, last_started_at, mr_stale, out_of_spec, fail_all)
     VALUES ${repeatedTuples(PARAM_TUPLE, rows.length)}${PARAM_UPSERT_TAIL}`,
    values: flatten(rows),
  }
}

/** Recomputes the moving-range terms of one station row from the measurements, after a late arrival. */
export async function rebuildMovingRange(db: Knex, key: { lotId: number; step: string; name: string; qualifier: number; stationId: number }): Promise<void> {
  await db.transaction(async (trx) => {
    const row = await trx('lot_param_stats').where({ lot_id: key.lotId, step: key.step, name: key.name, qualifier: key.qualifier, station_id: key.stationId }).forUpdate().first('mr_stale')
    if (!row?.mr_stale) return
    const values = await trx('measurements').where({ lot_id: key.lotId, name: key.name, qualifier: key.qualifier, step: key.step, station_id: key.stationId, first_attempt: true })
      .orderBy('started_at').orderBy('id').select('value', 'started_at')
    let sum = 0
    for (let i = 1; i < values.length; i++) sum += Math.abs(values[i].value - values[i - 1].value)
    const last = values[values.length - 1]
    await trx('lot_param_stats').where({ lot_id: key.lotId, step: key.step, name: key.name, qualifier: key.qualifier, station_id: key.stationId })
      .update({ mr_sum: sum, mr_n: Math.max(0, values.length - 1), last_value: last?.value ?? null, last_started_at: last?.started_at ?? null, mr_stale: false })
  })
}

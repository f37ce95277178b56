// Lot yield counters, updated in the run's own transaction, and the repair of a parameter row's moving range.
// One row per station keeps concurrent stations off each other's rows; readers add the station rows together.
// The parameter statistics themselves are kept by fold-param-stats.
import type { Knex } from 'knex'
import type { ParamRowKey } from './param-stats-merge'
import type { BeginTransaction } from './stats-lock'

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

/** Recomputes the moving-range terms of one station row from the measurements, after a late arrival (under the statistics lock). */
export async function rebuildMovingRange(begin: BeginTransaction, key: ParamRowKey): Promise<void> {
  await begin(async (trx) => {
    const row = await trx('lot_param_stats').where({ lot_id: key.lotId, step: key.step, name: key.name, qualifier: key.qualifier, station_id: key.stationId }).forUpdate().first('mr_stale')
    if (!row?.mr_stale) return
    // runs still waiting to be folded are left to the fold, which applies them after these
    const values = await trx('measurements').where({ lot_id: key.lotId, name: key.name, qualifier: key.qualifier, step: key.step, station_id: key.stationId, first_attempt: true })
      .whereNotIn('run_id', trx('lot_stats_pending').where({ lot_id: key.lotId }).select('run_id'))
      .orderBy('started_at').orderBy('id').select('value', 'started_at')
    let sum = 0
    for (let i = 1; i < values.length; i++) sum += Math.abs(values[i].value - values[i - 1].value)
    const last = values[values.length - 1]
    await trx('lot_param_stats').where({ lot_id: key.lotId, step: key.step, name: key.name, qualifier: key.qualifier, station_id: key.stationId })
      .update({ mr_sum: sum, mr_n: Math.max(0, values.length - 1), last_value: last?.value ?? null, last_started_at: last?.started_at ?? null, mr_stale: false })
  })
}

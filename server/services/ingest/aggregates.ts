// Lot yield counters, updated in the run's own transaction. One row per station keeps concurrent stations off
// each other's rows; readers add the station rows together. The parameter statistics are kept by fold-param-stats.
import type { Knex } from 'knex'

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

// The SQL of storing one run. The single-run writer sends it as two round trips, the first opening the transaction
// and the second committing it; the bench's direct writer sends these very texts, so the two differ only by what
// the server adds around them.
import { INSERTED_RUN_ID, measurementsInsert, pendingStatsInsert, REMEMBER_RUN_ID, RUN_INSERT_SQL, runInsertValues, tracesInsert, unitStepUpsert, type RunRow } from '../../database/repositories/runs'
import { joinStatements, type Statement } from '../../database/raw-connection'
import { stepStatsStatement, type AggregateContext } from './aggregates'
import { runCalibrationStatements } from '../calibration/run-links'
import type { RunCalibration } from '../calibration/in-force'
import type { JudgedMeasurement } from './judge-run'

export { unitLockStatements } from '../../database/repositories/runs'

/** What the unit-lock statements answer: the unit, and its attempts so far at the step. */
export type LockedUnit = { id: number; lotId: number; attempts: number; latestVerdict: 'pass' | 'fail' | null }

/** Reads the unit row out of the results of a round trip that ends with `unitLockStatements`. */
export function lockedUnit(results: unknown): LockedUnit {
  const all = results as any[]
  const row = all[all.length - 1][0] as { id: number; lot_id: number; attempts: number | null; latest_verdict: 'pass' | 'fail' | null }
  return { id: Number(row.id), lotId: Number(row.lot_id), attempts: Number(row.attempts ?? 0), latestVerdict: row.latest_verdict ?? null }
}

export type RunWrite = {
  row: RunRow
  measurements: JudgedMeasurement[]
  traces: { name: string; points: [number, number][] }[]
  previousLatest: 'pass' | 'fail' | null
  /** the instruments in force and their records (calibrationAt); the bench's writer leaves it out */
  calibration?: RunCalibration
}

/**
 * The run, its measurements and traces, the unit's step row, the lot's yield counters, and the run's place in the
 * queue of runs whose measurements the parameter statistics have yet to take in (see fold-param-stats).
 */
export function runWriteStatements({ row, measurements, traces, previousLatest, calibration }: RunWrite): Statement {
  const agg: AggregateContext = { lotId: row.lotId, stationId: row.stationId, step: row.step, attempt: row.attempt, startedAt: row.startedAt }
  const list: (Statement | string)[] = [{ sql: RUN_INSERT_SQL, values: runInsertValues(row) }, REMEMBER_RUN_ID]
  if (measurements.length) list.push(measurementsInsert(INSERTED_RUN_ID, { ...agg, firstAttempt: row.attempt === 1 }, measurements))
  if (traces.length) list.push(tracesInsert(INSERTED_RUN_ID, traces))
  list.push(unitStepUpsert(row.unitId, row.step, row.attempt, row.serverVerdict, INSERTED_RUN_ID), stepStatsStatement(agg, row.serverVerdict, previousLatest))
  list.push(pendingStatsInsert([{ runId: INSERTED_RUN_ID, lotId: row.lotId }]))
  // calibration hook: the run's instrument links and the history-version guard (services/calibration/run-links)
  if (calibration) list.push(runCalibrationStatements(INSERTED_RUN_ID, calibration))
  return joinStatements(list)
}

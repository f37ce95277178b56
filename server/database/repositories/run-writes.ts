// Every statement that stores runs: the same texts for one run or for many, sent by the write path in a few round
// trips. Values travel as placeholders, except a run's own columns in its measurement rows (checked integers and
// driver-escaped literals, written once per run rather than bound on every row).
import mysql from 'mysql2'
import { numberLiteral, textLiteral, utcLiteral } from '../sql-literals'
import type { JudgedMeasurement } from '../../../shared/types/judgement'

export type Statement = { sql: string; values: unknown[] }

/**
 * A run's id in a statement: a number, or the id a run insert earlier in the same transaction gave the k-th of its
 * rows (see `insertedRunRef`), which the statements bind as SQL rather than as a value.
 */
export type RunRef = number | { toSqlString(): string }

const FIRST_RUN_ID = '@tercet_first_run'

/** The id of the k-th row of the run insert that `rememberFirstRunId` follows. */
export function insertedRunRef(k: number): RunRef {
  if (!Number.isInteger(k) || k < 0) throw new RangeError('k must be a whole number')
  return mysql.raw(`(${FIRST_RUN_ID} + ${k} * @@auto_increment_increment)`)
}

/** Keeps the first id of the run insert just sent; a multi-row insert's ids follow it one increment apart. */
export const rememberFirstRunId = `SET ${FIRST_RUN_ID} = LAST_INSERT_ID()`

/**
 * Fails the transaction (error 1242) unless the runs just inserted hold the ids `insertedRunRef` assumes, one
 * increment apart in insert order; answers the first id and the increment when they do.
 */
export function insertedRunIdsCheck(uuids: string[]): Statement {
  const n = uuids.length
  return {
    sql: `SELECT IF((SELECT COUNT(*) FROM test_runs WHERE id BETWEEN ${FIRST_RUN_ID} AND ${FIRST_RUN_ID} + ${n - 1} * @@auto_increment_increment
        AND uuid IN (${list(n)})) = ${n}, ${FIRST_RUN_ID}, (SELECT 1 UNION ALL SELECT 2)) AS first, @@auto_increment_increment AS inc`,
    values: uuids,
  }
}

type Verdict = 'pass' | 'fail'

const tuple = (n: number) => `(${new Array(n).fill('?').join(', ')})`
const list = (n: number) => new Array(n).fill('?').join(', ')

/** Creates units on first sight and locks every one of them, existing ones included (no shared lock to upgrade). */
export function unitsUpsert(productId: number, units: { serial: string; lotId: number }[]): Statement {
  return {
    sql: `INSERT INTO units (product_id, lot_id, serial) VALUES ${units.map(() => '(?, ?, ?)').join(', ')} ON DUPLICATE KEY UPDATE id = id`,
    values: units.flatMap((u) => [productId, u.lotId, u.serial]),
  }
}

export type LockedUnitRow = {
  id: number; serial: string; lot_id: number; certified: number; unit_state: string | null; step: string | null; attempts: number | null
  first_verdict: Verdict | null; latest_verdict: Verdict | null; latest_run_id: number | null
  latest_started_at: Date | null; latest_finished_at: Date | null; latest_uuid: string | null; latest_station_id: number | null
  latest_lapsed: number | null
}

/**
 * The units with every step row and each step's latest run, under lock: the steps the runs go to for placing them,
 * all of them for the unit's standing (unit-standing.ts). `unit_state` null: the unit has no standing yet (new).
 */
export function lockUnitsWithSteps(productId: number, serials: string[]): Statement {
  return {
    sql: `SELECT u.id, u.serial, u.lot_id, u.certified, u.state AS unit_state, s.step, s.attempts, s.first_verdict, s.latest_verdict, s.latest_run_id,
        lr.started_at AS latest_started_at, lr.finished_at AS latest_finished_at, lr.uuid AS latest_uuid, lr.station_id AS latest_station_id,
        lr.calibration_lapsed AS latest_lapsed
      FROM units u LEFT JOIN unit_steps s ON s.unit_id = u.id
        LEFT JOIN test_runs lr ON lr.id = s.latest_run_id
      WHERE u.product_id = ? AND u.serial IN (${list(serials.length)}) ORDER BY u.serial FOR UPDATE`,
    values: [productId, ...serials],
  }
}

/**
 * The products' steps under a shared lock: a change of a product's steps (which recomputes its units' standings)
 * waits for the writes judging units by the steps they read here, and they for it.
 */
export function productStepsShared(productIds: number[]): Statement {
  return { sql: `SELECT id, steps FROM products WHERE id IN (${list(productIds.length)}) ORDER BY id LOCK IN SHARE MODE`, values: productIds }
}

/** Removes a unit that has no run (created for a run that was then refused); the caller holds its lock. */
export function dropUnitWithoutRuns(unitId: number): Statement {
  return { sql: 'DELETE FROM units WHERE id = ? AND NOT EXISTS (SELECT 1 FROM test_runs WHERE unit_id = ?)', values: [unitId, unitId] }
}

export type StoredUuidRow = { id: number; uuid: string; body_hash: string }

/** Runs already stored under the given station run ids (replays). */
export function storedRunsByUuid(uuids: string[]): Statement {
  return { sql: `SELECT id, uuid, body_hash FROM test_runs WHERE uuid IN (${list(uuids.length)})`, values: uuids }
}

export type StoredAttemptRow = {
  id: number; unit_id: number; step: string; uuid: string; started_at: Date; finished_at: Date; attempt: number
  server_verdict: Verdict; station_id: number; revision_id: number | null
}

/** Every stored run of the given unit steps, in attempt order: for placing a run that arrived after later ones. */
export function storedAttempts(pairs: { unitId: number; step: string }[]): Statement {
  return {
    sql: `SELECT id, unit_id, step, uuid, started_at, finished_at, attempt, server_verdict, station_id, revision_id FROM test_runs
      WHERE ${pairs.map(() => '(unit_id = ? AND step = ?)').join(' OR ')} ORDER BY unit_id, step, attempt`,
    values: pairs.flatMap((p) => [p.unitId, p.step]),
  }
}

/** New attempt numbers, applied from the highest old attempt down so the unique key never sees two at once. */
export function renumberAttempts(moves: { runId: number; to: number }[]): Statement {
  return {
    sql: `UPDATE test_runs SET attempt = CASE id ${moves.map(() => 'WHEN ? THEN ?').join(' ')} END
      WHERE id IN (${list(moves.length)}) ORDER BY attempt DESC`,
    values: [...moves.flatMap((m) => [m.runId, m.to]), ...moves.map((m) => m.runId)],
  }
}

export type RunRow = {
  uuid: string; bodyHash: string; unitId: number; lotId: number; stationId: number; revisionId: number | null
  step: string; attempt: number; startedAt: Date; finishedAt: Date; operator: string | null
  softwareSequence: string | null; softwareVersion: string | null; temperatureC: number | null; supplyV: number | null
  stationVerdict: Verdict | null; serverVerdict: Verdict; verdictDisagrees: boolean
  missingRequired: { name: string; qualifier: number }[]; calibrationLapsed: boolean; measurementIssue: boolean; reference: unknown
  /** when the run reached Tercet; null for now (the database clock) */
  receivedAt: Date | null
}

const RUN_COLUMNS = `uuid, body_hash, unit_id, lot_id, station_id, revision_id, step, attempt, started_at, finished_at, operator,
  software_sequence, software_version, temperature_c, supply_v, station_verdict, server_verdict, verdict_disagrees, missing_required,
  calibration_lapsed, measurement_issue, reference, received_at`
const RUN_TUPLE = `(${list(22)}, COALESCE(?, NOW(3)))`

function runValues(r: RunRow): unknown[] {
  return [r.uuid, r.bodyHash, r.unitId, r.lotId, r.stationId, r.revisionId, r.step, r.attempt, r.startedAt, r.finishedAt, r.operator,
    r.softwareSequence, r.softwareVersion, r.temperatureC, r.supplyV, r.stationVerdict, r.serverVerdict, r.verdictDisagrees,
    r.missingRequired.length ? JSON.stringify(r.missingRequired) : null, r.calibrationLapsed, r.measurementIssue,
    r.reference ? JSON.stringify(r.reference) : null, r.receivedAt]
}

/** The runs; with `returning`, answering each one's new id with its station run id. */
export function runsInsert(rows: RunRow[], returning = true): Statement {
  const values: unknown[] = []
  for (const r of rows) values.push(...runValues(r))
  return { sql: `INSERT INTO test_runs (${RUN_COLUMNS}) VALUES ${rows.map(() => RUN_TUPLE).join(', ')}${returning ? ' RETURNING id, uuid' : ''}`, values }
}

export type MeasurementContext = { runId: RunRef; lotId: number; stationId: number; revisionId: number | null; step: string; firstAttempt: boolean; startedAt: Date }

const MEASUREMENT_HEAD = `INSERT INTO measurements (run_id, lot_id, station_id, revision_id, step, first_attempt, started_at, name, qualifier, value, unit,
  uncertainty, lsl, usl, target, rule, guard_band, verdict, zone, derived, excess_db, implausible, at_offset_hz) VALUES `

/**
 * The measurements of one or more runs in one INSERT, with the limits applied copied beside each value. Every value
 * is written as a literal (numbers checked finite, text escaped by the driver): a run carries some four hundred of
 * them, and building the text once costs less than binding placeholders and formatting them afterwards.
 */
export function measurementsInsert(items: { ctx: MeasurementContext; ms: JudgedMeasurement[] }[]): Statement {
  // rows gathered and joined once: a batch's statement runs to hundreds of kilobytes
  const rows: string[] = []
  for (const { ctx, ms } of items) {
    const revisionId = ctx.revisionId ?? 0
    if (![ctx.lotId, ctx.stationId, revisionId].every(Number.isInteger) || (typeof ctx.runId === 'number' && !Number.isInteger(ctx.runId))) throw new TypeError('run, lot, station and revision ids must be integers')
    const runId = typeof ctx.runId === 'number' ? String(ctx.runId) : ctx.runId.toSqlString()
    const head = `(${runId},${ctx.lotId},${ctx.stationId},${revisionId},${textLiteral(ctx.step)},${ctx.firstAttempt ? 1 : 0},${utcLiteral(ctx.startedAt)},`
    for (const m of ms) {
      const l = m.limit
      rows.push(head + textLiteral(m.name) + ',' + numberLiteral(m.qualifier) + ',' + numberLiteral(m.value) + ',' + textLiteral(m.unit) + ','
        + numberLiteral(m.uncertainty) + ',' + (l ? `${numberLiteral(l.lsl)},${numberLiteral(l.usl)},${numberLiteral(l.target)},${textLiteral(l.rule)},${numberLiteral(l.guardBand)}` : 'NULL,NULL,NULL,NULL,NULL')
        + ',' + textLiteral(m.verdict) + ',' + textLiteral(m.zone) + ',' + (m.derived ? 1 : 0) + ',' + numberLiteral(m.excessDb) + ',' + (m.implausible ? 1 : 0)
        + ',' + numberLiteral(m.atOffsetHz) + ')')
    }
  }
  return { sql: MEASUREMENT_HEAD + rows.join(','), values: [] }
}

export function tracesInsert(rows: { runId: RunRef; name: string; points: string }[]): Statement {
  return { sql: `INSERT INTO traces (run_id, name, points) VALUES ${rows.map(() => '(?, ?, ?)').join(', ')}`, values: rows.flatMap((t) => [t.runId, t.name, t.points]) }
}

/** Moves stored runs' measurements into or out of the first-attempt sample. */
export function firstAttemptFlags(runIds: number[], firstAttempt: boolean): Statement {
  return { sql: `UPDATE measurements SET first_attempt = ? WHERE run_id IN (${list(runIds.length)})`, values: [firstAttempt, ...runIds] }
}

export type UnitStepRow = { unitId: number; step: string; attempts: number; firstVerdict: Verdict; latestVerdict: Verdict; latestRunId: RunRef }

/** The units' step rows as they stand after the write. */
export function unitStepsUpsert(rows: UnitStepRow[]): Statement {
  return {
    sql: `INSERT INTO unit_steps (unit_id, step, attempts, first_verdict, latest_verdict, latest_run_id) VALUES ${rows.map(() => tuple(6)).join(', ')}
      ON DUPLICATE KEY UPDATE attempts = VALUES(attempts), first_verdict = VALUES(first_verdict), latest_verdict = VALUES(latest_verdict), latest_run_id = VALUES(latest_run_id)`,
    values: rows.flatMap((r) => [r.unitId, r.step, r.attempts, r.firstVerdict, r.latestVerdict, r.latestRunId]),
  }
}

export type StepCounterRow = { lotId: number; step: string; stationId: number; runs: number; units: number; firstPass: number; latestPass: number }

/**
 * Changes to the yield counters, one row per lot, step and station. Rows are locked in key order whoever writes
 * them, so two writers touching the same rows wait for each other instead of deadlocking.
 */
export function stepCountersAdd(rows: StepCounterRow[]): Statement {
  const sorted = [...rows].sort((a, b) => a.lotId - b.lotId || (a.step < b.step ? -1 : a.step > b.step ? 1 : 0) || a.stationId - b.stationId)
  return {
    sql: `INSERT INTO lot_step_stats (lot_id, step, station_id, runs, units, first_pass, latest_pass) VALUES ${sorted.map(() => tuple(7)).join(', ')}
      ON DUPLICATE KEY UPDATE runs = runs + VALUES(runs), units = units + VALUES(units), first_pass = first_pass + VALUES(first_pass),
        latest_pass = latest_pass + VALUES(latest_pass)`,
    values: sorted.flatMap((r) => [r.lotId, r.step, r.stationId, r.runs, r.units, r.firstPass, r.latestPass]),
  }
}

/** Runs whose measurements the parameter statistics have yet to take in (see fold-param-stats). */
export function pendingStatsInsert(rows: { runId: RunRef; lotId: number }[]): Statement {
  return { sql: `INSERT INTO lot_stats_pending (run_id, lot_id) VALUES ${rows.map(() => '(?, ?)').join(', ')}`, values: rows.flatMap((r) => [r.runId, r.lotId]) }
}

/** Statistics rows whose first-attempt sample lost or gained a stored run: the next fold recomputes them. */
export function statsRebuildMark(rows: { lotId: number; step: string; revisionId: number; stationId: number }[]): Statement {
  return {
    sql: `INSERT IGNORE INTO lot_stats_rebuild (lot_id, step, revision_id, station_id) VALUES ${rows.map(() => tuple(4)).join(', ')}`,
    values: rows.flatMap((r) => [r.lotId, r.step, r.revisionId, r.stationId]),
  }
}

import type { Knex } from 'knex'
import mysql from 'mysql2'
import type { JudgedMeasurement } from '../../../shared/types/judgement'

/** A run's id as a number, or the id of the run inserted just before in the same round trip. */
export type RunIdRef = number | { toSqlString(): string }

const RUN_ID_VARIABLE = '@tercet_run'
/** Stands for the id of the run inserted earlier in the same round trip (see `rememberRunId`). */
export const INSERTED_RUN_ID: RunIdRef = mysql.raw(RUN_ID_VARIABLE)
/** Keeps the id the run insert just generated, before the measurements' own ids replace LAST_INSERT_ID(). */
export const REMEMBER_RUN_ID = `SET ${RUN_ID_VARIABLE} = LAST_INSERT_ID()`

export type RunRow = {
  uuid: string; bodyHash: string; unitId: number; lotId: number; stationId: number; revisionId: number | null
  step: string; attempt: number; startedAt: Date; finishedAt: Date; operator: string | null
  softwareSequence: string | null; softwareVersion: string | null; temperatureC: number | null; supplyV: number | null
  stationVerdict: 'pass' | 'fail' | null; serverVerdict: 'pass' | 'fail'; verdictDisagrees: boolean
  missingRequired: { name: string; qualifier: number }[]; calibrationLapsed: boolean; measurementIssue: boolean; reference: unknown
}

export async function findRunHashByUuid(db: Knex, uuid: string): Promise<{ id: number; bodyHash: string } | undefined> {
  const r = await db('test_runs').where({ uuid }).first('id', 'body_hash')
  return r ? { id: Number(r.id), bodyHash: r.body_hash } : undefined
}

export const RUN_INSERT_SQL = `INSERT INTO test_runs (uuid, body_hash, unit_id, lot_id, station_id, revision_id, step, attempt, started_at, finished_at,
  operator, software_sequence, software_version, temperature_c, supply_v, station_verdict, server_verdict, verdict_disagrees, missing_required,
  calibration_lapsed, measurement_issue, reference) VALUES (${new Array(22).fill('?').join(', ')})`

export function runInsertValues(r: RunRow): Knex.RawBinding[] {
  return [r.uuid, r.bodyHash, r.unitId, r.lotId, r.stationId, r.revisionId, r.step, r.attempt, r.startedAt, r.finishedAt, r.operator,
    r.softwareSequence, r.softwareVersion, r.temperatureC, r.supplyV, r.stationVerdict, r.serverVerdict, r.verdictDisagrees,
    r.missingRequired.length ? JSON.stringify(r.missingRequired) : null, r.calibrationLapsed, r.measurementIssue,
    r.reference ? JSON.stringify(r.reference) : null]
}

const RUN_TUPLE = `(${new Array(22).fill('?').join(', ')})`

export function runsInsertMany(rows: RunRow[]): { sql: string; values: Knex.RawBinding[] } {
  return { sql: RUN_INSERT_SQL.slice(0, RUN_INSERT_SQL.lastIndexOf('VALUES') + 7) + rows.map(() => RUN_TUPLE).join(', '), values: rows.flatMap(runInsertValues) }
}

export const UNIT_INSERT_SQL = 'INSERT IGNORE INTO units (product_id, lot_id, serial) VALUES (?, ?, ?)'

/** The unit's attempt count and latest result at a step; the first result is kept from the first insert. */
export function unitStepUpsert(unitId: number, step: string, attempt: number, verdict: 'pass' | 'fail', runId: RunIdRef): { sql: string; values: Knex.RawBinding[] } {
  return {
    sql: `INSERT INTO unit_steps (unit_id, step, attempts, first_verdict, latest_verdict, latest_run_id) VALUES (?, ?, ?, ?, ?, ?)
      ON DUPLICATE KEY UPDATE attempts = VALUES(attempts), latest_verdict = VALUES(latest_verdict), latest_run_id = VALUES(latest_run_id)`,
    values: [unitId, step, attempt, verdict, verdict, runId],
  }
}

/** Several unit steps in one upsert; for a unit step listed twice the later row wins, so list them by attempt. */
export function unitStepsUpsertMany(rows: { unitId: number; step: string; attempt: number; verdict: 'pass' | 'fail'; runId: number }[]): { sql: string; values: Knex.RawBinding[] } {
  return {
    sql: `INSERT INTO unit_steps (unit_id, step, attempts, first_verdict, latest_verdict, latest_run_id) VALUES ${rows.map(() => '(?, ?, ?, ?, ?, ?)').join(', ')}
      ON DUPLICATE KEY UPDATE attempts = VALUES(attempts), latest_verdict = VALUES(latest_verdict), latest_run_id = VALUES(latest_run_id)`,
    values: rows.flatMap((r) => [r.unitId, r.step, r.attempt, r.verdict, r.verdict, r.runId]),
  }
}

export type MeasurementContext = { lotId: number; stationId: number; revisionId: number | null; step: string; firstAttempt: boolean; startedAt: Date }

/** A DATETIME(3) literal in UTC, as the connection's time zone reads it. */
function utcLiteral(d: Date): string {
  return `'${d.toISOString().slice(0, 23).replace('T', ' ')}'`
}

/**
 * One multi-row INSERT for a run's measurements, with the limits applied copied beside each value. The run's own
 * columns are the same on every row, so they are written into the SQL once, escaped, rather than bound per row.
 */
export function measurementsInsert(runId: RunIdRef, ctx: MeasurementContext, ms: JudgedMeasurement[]): { sql: string; values: Knex.RawBinding[] } {
  const runRef = typeof runId === 'number' ? String(runId) : runId.toSqlString()
  const revisionId = ctx.revisionId ?? 0
  if (!Number.isInteger(ctx.lotId) || !Number.isInteger(ctx.stationId) || !Number.isInteger(revisionId)) throw new TypeError('lot, station and revision ids must be integers')
  const tuple = `(${runRef}, ${ctx.lotId}, ${ctx.stationId}, ${revisionId}, ${mysql.escape(ctx.step)}, ${ctx.firstAttempt ? 1 : 0}, ${utcLiteral(ctx.startedAt)}, ${new Array(16).fill('?').join(', ')})`
  const values: Knex.RawBinding[] = []
  for (const m of ms) {
    const l = m.limit
    values.push(m.name, m.qualifier, m.value, m.unit, m.uncertainty,
      l ? l.lsl : null, l ? l.usl : null, l ? l.target : null, l ? l.rule : null, l ? l.guardBand : null,
      m.verdict, m.zone, m.derived, m.excessDb, m.implausible, m.atOffsetHz ?? null)
  }
  return {
    sql: `INSERT INTO measurements (run_id, lot_id, station_id, revision_id, step, first_attempt, started_at, name, qualifier, value, unit, uncertainty,
      lsl, usl, target, rule, guard_band, verdict, zone, derived, excess_db, implausible, at_offset_hz) VALUES ${new Array(ms.length).fill(tuple).join(', ')}`,
    values,
  }
}

/** Measurements of several runs in one INSERT, in the given order. */
export function measurementsInsertMany(items: { runId: number; ctx: MeasurementContext; ms: JudgedMeasurement[] }[]): { sql: string; values: Knex.RawBinding[] } {
  const parts = items.filter((x) => x.ms.length).map((x) => measurementsInsert(x.runId, x.ctx, x.ms))
  const head = parts[0]!.sql.slice(0, parts[0]!.sql.indexOf(' VALUES ') + 8)
  return { sql: head + parts.map((p) => p.sql.slice(head.length)).join(', '), values: parts.flatMap((p) => p.values) }
}

/** Creates the unit on first sight and locks it, reading its attempts so far at the step (two statements). */
export function unitLockStatements(productId: number, lotId: number, serial: string, step: string): { sql: string; values: Knex.RawBinding[] } {
  return {
    sql: `${UNIT_INSERT_SQL};
      SELECT u.id, u.lot_id, s.attempts, s.latest_verdict FROM units u LEFT JOIN unit_steps s ON s.unit_id = u.id AND s.step = ?
        WHERE u.product_id = ? AND u.serial = ? FOR UPDATE`,
    values: [productId, lotId, serial, step, productId, serial],
  }
}

export function tracesInsert(runId: RunIdRef, traces: { name: string; points: [number, number][] }[]): { sql: string; values: Knex.RawBinding[] } {
  return {
    sql: `INSERT INTO traces (run_id, name, points) VALUES ${traces.map(() => '(?, ?, ?)').join(', ')}`,
    values: traces.flatMap((t) => [runId as Knex.RawBinding, t.name, JSON.stringify(t.points)]),
  }
}

/** Marks runs as not yet folded into the lot's parameter statistics. */
export function pendingStatsInsert(rows: { runId: RunIdRef; lotId: number }[]): { sql: string; values: Knex.RawBinding[] } {
  const values: Knex.RawBinding[] = []
  for (const r of rows) values.push(r.runId as Knex.RawBinding, r.lotId)
  return { sql: `INSERT INTO lot_stats_pending (run_id, lot_id) VALUES ${rows.map(() => '(?, ?)').join(', ')}`, values }
}

/** The stored runs with everything a result view shows, by internal id. */
export async function loadRunsWithMeasurements(db: Knex, runIds: number[]) {
  if (!runIds.length) return []
  const runs = await db('test_runs as r')
    .join('units as u', 'u.id', 'r.unit_id').join('products as p', 'p.id', 'u.product_id')
    .join('lots as l', 'l.id', 'r.lot_id').join('stations as s', 's.id', 'r.station_id')
    .leftJoin('spec_revisions as sr', 'sr.id', 'r.revision_id')
    .whereIn('r.id', runIds)
    .select('r.*', 'u.serial', 'p.part_number', 'l.code as lot_code', 's.name as station_name', 'sr.revision as revision_number')
  const ms = await db('measurements').whereIn('run_id', runIds).orderBy('id')
  const traces = await db('traces').whereIn('run_id', runIds).orderBy('id')
  return runs.map((r: any) => ({
    run: r,
    measurements: ms.filter((m: any) => Number(m.run_id) === Number(r.id)),
    traces: traces.filter((t: any) => Number(t.run_id) === Number(r.id)),
  }))
}

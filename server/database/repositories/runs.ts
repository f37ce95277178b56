import type { Knex } from 'knex'
import type { JudgedMeasurement } from '../../services/ingest/judge-run'

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

// Hot path: plain SQL with placeholders rather than the query builder, which costs more CPU than the insert itself.
export async function insertRun(trx: Knex, r: RunRow): Promise<number> {
  const [res] = await trx.raw(RUN_INSERT_SQL, runInsertValues(r))
  return Number(res.insertId)
}

export const UNIT_INSERT_SQL = 'INSERT IGNORE INTO units (product_id, lot_id, serial) VALUES (?, ?, ?)'

/** The unit's attempt count and latest result at a step; the first result is kept from the first insert. */
export function unitStepUpsert(unitId: number, step: string, attempt: number, verdict: 'pass' | 'fail', runId: number): { sql: string; values: Knex.RawBinding[] } {
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

export type MeasurementContext = { lotId: number; stationId: number; step: string; firstAttempt: boolean; startedAt: Date }

const M_TUPLE = `(${new Array(20).fill('?').join(', ')})`

/** One multi-row INSERT for a run's measurements, with the limits applied copied beside each value. */
export function measurementsInsert(runId: number, ctx: MeasurementContext, ms: JudgedMeasurement[]): { sql: string; values: Knex.RawBinding[] } {
  const values: Knex.RawBinding[] = []
  for (const m of ms) {
    values.push(runId, ctx.lotId, ctx.stationId, ctx.step, ctx.firstAttempt, ctx.startedAt, m.name, m.qualifier, m.value, m.unit, m.uncertainty,
      m.limit?.lsl ?? null, m.limit?.usl ?? null, m.limit?.target ?? null, m.limit?.rule ?? null, m.limit?.guardBand ?? null,
      m.verdict, m.zone, m.derived, m.excessDb)
  }
  return {
    sql: `INSERT INTO measurements (run_id, lot_id, station_id, step, first_attempt, started_at, name, qualifier, value, unit, uncertainty,
      lsl, usl, target, rule, guard_band, verdict, zone, derived, excess_db) VALUES ${ms.map(() => M_TUPLE).join(', ')}`,
    values,
  }
}

/** Measurements of several runs in one INSERT, in the given order. */
export function measurementsInsertMany(items: { runId: number; ctx: MeasurementContext; ms: JudgedMeasurement[] }[]): { sql: string; values: Knex.RawBinding[] } {
  const parts = items.filter((x) => x.ms.length).map((x) => measurementsInsert(x.runId, x.ctx, x.ms))
  const head = parts[0]!.sql.slice(0, parts[0]!.sql.indexOf(' VALUES ') + 8)
  return { sql: head + parts.map((p) => p.sql.slice(head.length)).join(', '), values: parts.flatMap((p) => p.values) }
}

export async function insertMeasurements(trx: Knex, runId: number, ctx: MeasurementContext, ms: JudgedMeasurement[]): Promise<void> {
  if (!ms.length) return
  const st = measurementsInsert(runId, ctx, ms)
  await trx.raw(st.sql, st.values)
}

export async function insertTraces(trx: Knex, runId: number, traces: { name: string; points: [number, number][] }[]): Promise<void> {
  if (!traces.length) return
  await trx('traces').insert(traces.map((t) => ({ run_id: runId, name: t.name, points: JSON.stringify(t.points) })))
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

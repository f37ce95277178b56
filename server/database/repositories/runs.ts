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

export async function insertRun(trx: Knex, r: RunRow): Promise<number> {
  const [id] = await trx('test_runs').insert({
    uuid: r.uuid, body_hash: r.bodyHash, unit_id: r.unitId, lot_id: r.lotId, station_id: r.stationId, revision_id: r.revisionId,
    step: r.step, attempt: r.attempt, started_at: r.startedAt, finished_at: r.finishedAt, operator: r.operator,
    software_sequence: r.softwareSequence, software_version: r.softwareVersion, temperature_c: r.temperatureC, supply_v: r.supplyV,
    station_verdict: r.stationVerdict, server_verdict: r.serverVerdict, verdict_disagrees: r.verdictDisagrees,
    missing_required: r.missingRequired.length ? JSON.stringify(r.missingRequired) : null,
    calibration_lapsed: r.calibrationLapsed, measurement_issue: r.measurementIssue,
    reference: r.reference ? JSON.stringify(r.reference) : null,
  })
  return Number(id)
}

export async function insertMeasurements(trx: Knex, runId: number, ctx: { lotId: number; stationId: number; step: string; firstAttempt: boolean; startedAt: Date }, ms: JudgedMeasurement[]): Promise<void> {
  if (!ms.length) return
  await trx('measurements').insert(ms.map((m) => ({
    run_id: runId, lot_id: ctx.lotId, station_id: ctx.stationId, step: ctx.step, first_attempt: ctx.firstAttempt, started_at: ctx.startedAt,
    name: m.name, qualifier: m.qualifier, value: m.value, unit: m.unit, uncertainty: m.uncertainty,
    lsl: m.limit?.lsl ?? null, usl: m.limit?.usl ?? null, target: m.limit?.target ?? null, rule: m.limit?.rule ?? null,
    guard_band: m.limit?.guardBand ?? null, verdict: m.verdict, zone: m.zone, derived: m.derived, excess_db: m.excessDb,
  })))
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

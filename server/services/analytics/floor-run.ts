// A run opened from the floor: its failing parameters with values and limits, and what else makes it doubtful.
import type { Knex } from 'knex'
import type { FloorRunDetail } from '../../../shared/types/floor'
import { loadRunsWithMeasurements } from '../../database/repositories/runs'
import { measurementFromRow } from '../ingest/run-view'

function parseJson<T>(v: unknown, fallback: T): T {
  if (v == null) return fallback
  return typeof v === 'string' ? JSON.parse(v) : (v as T)
}

export async function floorRunDetail(db: Knex, runId: number): Promise<FloorRunDetail | null> {
  const [loaded] = await loadRunsWithMeasurements(db, [runId])
  if (!loaded) return null
  const { run: r, measurements } = loaded
  const failing = measurements.map(measurementFromRow).filter((m) => m.verdict === 'fail').map((m) => ({
    name: m.name, qualifier: m.qualifier || null, value: m.value, unit: m.unit,
    lsl: m.limit?.lsl ?? null, usl: m.limit?.usl ?? null, verdict: m.verdict, zone: m.zone, implausible: m.implausible,
  }))
  return {
    id: Number(r.id), serial: r.serial, partNumber: r.part_number, lot: r.lot_code, station: r.station_name, step: r.step,
    attempt: r.attempt, verdict: r.server_verdict, revision: r.revision_number ?? null,
    startedAt: new Date(r.started_at).toISOString(), finishedAt: new Date(r.finished_at).toISOString(), receivedAt: new Date(r.received_at).toISOString(),
    failing, measured: measurements.length,
    missingRequired: parseJson<{ name: string; qualifier: number }[]>(r.missing_required, []).map((x) => ({ name: x.name, qualifier: x.qualifier || null })),
    calibrationLapsed: !!r.calibration_lapsed, measurementIssue: !!r.measurement_issue,
  }
}

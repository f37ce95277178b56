// One shape for a stored run, whether it was just judged or read back for a replay or a unit page.
import { qualifierKind } from '../../../shared/utils/measurement-names'

export type MeasurementView = {
  name: string; offsetHz?: number; harmonic?: number; value: number; unit: string; uncertainty: number | null
  limit: { lsl: number | null; usl: number | null; target: number | null; rule: 'simple' | 'guarded'; guardBand: number } | null
  verdict: 'pass' | 'fail' | 'info'; zone: 'inside' | 'guard' | 'outside' | null; derived: boolean; excessDb: number | null
  /** a value no working bench produces: kept out of capability and charts */
  implausible: boolean
  /** where along the phase-noise sweep a derived value was found (the mask margin's worst offset) */
  atOffsetHz?: number
}

export type RunView = {
  id: string; serial: string; partNumber: string; lot: string; step: string; attempt: number; station: string
  startedAt: string; finishedAt: string; verdict: 'pass' | 'fail'; stationVerdict: 'pass' | 'fail' | null
  verdictDisagrees: boolean; incomplete: boolean; missingRequired: ({ name: string } & ReturnType<typeof qualifierFields>)[]
  calibrationLapsed: boolean; measurementIssue: boolean; revision: number | null
  measurements: MeasurementView[]
}

export function qualifierFields(name: string, q: number): { offsetHz?: number; harmonic?: number } {
  const kind = qualifierKind(name)
  if (kind === 'offsetHz') return { offsetHz: q }
  if (kind === 'harmonic') return { harmonic: q }
  return {}
}

type MeasurementLike = {
  name: string; qualifier: number; value: number; unit: string; uncertainty: number | null; verdict: 'pass' | 'fail' | 'info'
  zone: 'inside' | 'guard' | 'outside' | null; derived: boolean; excessDb: number | null
  limit: MeasurementView['limit']; implausible: boolean; atOffsetHz: number | null
}

export function measurementView(m: MeasurementLike): MeasurementView {
  const view: MeasurementView = { name: m.name } as MeasurementView
  // the qualifier key comes right after the name, as readers of the JSON expect it
  const kind = qualifierKind(m.name)
  if (kind === 'offsetHz') view.offsetHz = m.qualifier
  else if (kind === 'harmonic') view.harmonic = m.qualifier
  view.value = m.value
  view.unit = m.unit
  view.uncertainty = m.uncertainty
  view.limit = m.limit
  view.verdict = m.verdict
  view.zone = m.zone
  view.derived = m.derived
  view.excessDb = m.excessDb
  view.implausible = m.implausible
  if (m.atOffsetHz != null) view.atOffsetHz = m.atOffsetHz
  return view
}

export function measurementFromRow(r: any): MeasurementLike {
  const hasLimit = r.lsl != null || r.usl != null
  return {
    name: r.name, qualifier: r.qualifier, value: r.value, unit: r.unit, uncertainty: r.uncertainty, verdict: r.verdict,
    zone: r.zone ?? null, derived: !!r.derived, excessDb: r.excess_db ?? null, implausible: !!r.implausible, atOffsetHz: r.at_offset_hz ?? null,
    limit: hasLimit ? { lsl: r.lsl, usl: r.usl, target: r.target, rule: r.rule, guardBand: r.guard_band ?? 0 } : null,
  }
}

function parseJson<T>(v: unknown, fallback: T): T {
  if (v == null) return fallback
  return typeof v === 'string' ? JSON.parse(v) : (v as T)
}

/** A run read back from the database (joined with serial, part, lot, station and revision number). */
export function runViewFromRows(r: any, ms: any[]): RunView {
  const missing = parseJson<{ name: string; qualifier: number }[]>(r.missing_required, [])
  return {
    id: r.uuid, serial: r.serial, partNumber: r.part_number, lot: r.lot_code, step: r.step, attempt: r.attempt, station: r.station_name,
    startedAt: new Date(r.started_at).toISOString(), finishedAt: new Date(r.finished_at).toISOString(),
    verdict: r.server_verdict, stationVerdict: r.station_verdict ?? null, verdictDisagrees: !!r.verdict_disagrees,
    incomplete: missing.length > 0, missingRequired: missing.map((x) => ({ name: x.name, ...qualifierFields(x.name, x.qualifier) })),
    calibrationLapsed: !!r.calibration_lapsed, measurementIssue: !!r.measurement_issue, revision: r.revision_number ?? null,
    measurements: ms.map((m) => measurementView(measurementFromRow(m))),
  }
}

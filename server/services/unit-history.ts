import type { Knex } from 'knex'
import { findUnitsBySerial, loadUnitRuns, phaseNoiseMasksOf } from '../database/repositories/units'
import { limitMaskFromMeasurements } from '../../shared/utils/phase-noise-plot'
import type { UnitInfo, UnitRun } from '../../shared/types/unit-history'
import { runViewFromRows } from './ingest/run-view'
import { runInstrumentViews } from './calibration/views'
import { unitRfChecks } from './unit-rf-checks'

export type UnitHistory =
  | { kind: 'found'; unit: UnitInfo; runs: UnitRun[] }
  | { kind: 'ambiguous'; parts: string[] }
  | { kind: 'missing'; parts: string[] }

function points(v: unknown): [number, number][] {
  if (v == null) return []
  return (typeof v === 'string' ? JSON.parse(v) : v) as [number, number][]
}

/** A unit by serial, with every run it went through; `part` picks one when two parts share the serial. */
export async function unitHistory(db: Knex, serial: string, part?: string): Promise<UnitHistory> {
  const units = await findUnitsBySerial(db, serial)
  const parts = units.map((u) => u.partNumber)
  const unit = part !== undefined ? units.find((u) => u.partNumber === part) : units.length === 1 ? units[0] : undefined
  if (!unit) return units.length > 1 && part === undefined ? { kind: 'ambiguous', parts } : { kind: 'missing', parts }

  const rows = await loadUnitRuns(db, unit.id)
  const [masks, instruments] = await Promise.all([
    phaseNoiseMasksOf(db, [...new Set(rows.map(({ run }) => Number(run.revision_id)).filter((id) => id > 0))]),
    runInstrumentViews(db, rows.map(({ run }) => Number(run.id))),
  ])
  const runs: UnitRun[] = rows.map(({ run, measurements, traces }) => {
    const view = runViewFromRows(run, measurements)
    // the mask of the revision the run was judged by (the sweep is judged against all of it), else the spot snapshots
    const mask = masks.get(`${run.revision_id}\u0000${run.step}`) ?? limitMaskFromMeasurements(view.measurements)
    return {
      ...view,
      receivedAt: new Date(run.received_at).toISOString(),
      revisionApprovedAt: run.revision_approved_at ? new Date(run.revision_approved_at).toISOString() : null,
      traces: traces.map((t: any) => ({ name: t.name, points: points(t.points) })),
      phaseNoiseMask: mask,
      rf: unitRfChecks(unit, run.reference, view.measurements),
      instruments: instruments.get(Number(run.id)) ?? [],
    }
  })
  const { id: _id, createdAt, ...rest } = unit
  return { kind: 'found', unit: { ...rest, createdAt: new Date(createdAt).toISOString() }, runs }
}

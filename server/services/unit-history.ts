import type { Knex } from 'knex'
import { findUnitsBySerial, loadUnitRuns, type UnitRecord } from '../database/repositories/units'
import { limitMaskFromMeasurements, type MaskPoint } from '../../shared/utils/phase-noise-plot'
import type { RunInstrumentView } from '../../shared/types/calibration'
import { runViewFromRows, type RunView } from './ingest/run-view'
import { runInstrumentViews } from './calibration/views'

export type UnitRunView = RunView & {
  receivedAt: string
  traces: { name: string; points: [number, number][] }[]
  phaseNoiseMask: MaskPoint[]
  /** the instruments the run recorded and the calibration record in force for each at its test time */
  instruments: RunInstrumentView[]
}

export type UnitHistory =
  | { kind: 'found'; unit: Omit<UnitRecord, 'id' | 'createdAt'> & { createdAt: string }; runs: UnitRunView[] }
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
  const instruments = await runInstrumentViews(db, rows.map(({ run }) => Number(run.id)))
  const runs = rows.map(({ run, measurements, traces }) => {
    const view = runViewFromRows(run, measurements)
    return {
      ...view,
      receivedAt: new Date(run.received_at).toISOString(),
      traces: traces.map((t: any) => ({ name: t.name, points: points(t.points) })),
      phaseNoiseMask: limitMaskFromMeasurements(view.measurements),
      instruments: instruments.get(Number(run.id)) ?? [],
    }
  })
  const { id: _id, createdAt, ...rest } = unit
  return { kind: 'found', unit: { ...rest, createdAt: new Date(createdAt).toISOString() }, runs }
}

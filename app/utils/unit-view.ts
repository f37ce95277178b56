// The shape GET /api/units/:serial answers with, as the unit pages read it.
import type { RunInstrumentView } from '#shared/types/calibration'

export type UnitMeasurement = {
  name: string; offsetHz?: number; harmonic?: number; value: number; unit: string; uncertainty: number | null
  limit: { lsl: number | null; usl: number | null; target: number | null; rule: 'simple' | 'guarded'; guardBand: number } | null
  verdict: 'pass' | 'fail' | 'info'; zone: 'inside' | 'guard' | 'outside' | null; derived: boolean; excessDb: number | null
}

export type UnitRun = {
  id: string; step: string; attempt: number; station: string; startedAt: string; finishedAt: string; receivedAt: string
  verdict: 'pass' | 'fail'; stationVerdict: 'pass' | 'fail' | null; verdictDisagrees: boolean
  incomplete: boolean; missingRequired: { name: string; offsetHz?: number; harmonic?: number }[]
  calibrationLapsed: boolean; measurementIssue: boolean; revision: number | null
  measurements: UnitMeasurement[]
  traces: { name: string; points: [number, number][] }[]
  phaseNoiseMask: { offsetHz: number; usl: number }[]
  instruments: RunInstrumentView[]
}

export type UnitInfo = { serial: string; partNumber: string; productName: string; lot: string; createdAt: string }

/** unit is null only in the placeholder shown before the first answer. */
export type UnitHistoryReply = { unit: UnitInfo | null; runs: UnitRun[] }


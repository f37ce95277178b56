// The floor view: its first snapshot (GET /api/floor/snapshot) and the events of its stream (GET /api/floor/stream).
import type { ProportionInterval } from '../utils/yield'

export type FloorStationView = {
  name: string; location: string | null; lastSeenAt: string | null; runsToday: number
  lastRun: { id: number; verdict: 'pass' | 'fail'; finishedAt: string; serial: string; lot: string; step: string } | null
}

export type FloorStepYield = { step: string; units: number; runs: number; firstPass: number; firstPassYield: ProportionInterval | null }

export type FloorLotView = {
  code: string; partNumber: string; productName: string; status: string; plannedQty: number | null; unitsTested: number
  finalStep: string | null; finalFirstPassYield: ProportionInterval | null
  steps: FloorStepYield[]
}

/**
 * One arriving run (the stream's `run` event): `receivedAt` is when Tercet took it (the feed's order), `startedAt` and
 * `finishedAt` when the station tested it (a run replayed from a station's buffer arrives long after its test).
 */
export type FloorRunEvent = {
  id: number; serial: string; part: string; lot: string; station: string; step: string; attempt: number; verdict: 'pass' | 'fail'
  startedAt: string; finishedAt: string; receivedAt: string
  /** how many of its parameters failed */
  failed: number
}

/** One parameter of a run as the floor's run panel shows it (GET /api/floor/runs/:id). */
export type FloorRunParameter = {
  name: string; qualifier: number | null; value: number; unit: string
  lsl: number | null; usl: number | null; verdict: 'pass' | 'fail' | 'info'; zone: 'inside' | 'guard' | 'outside' | null; implausible: boolean
}

/** A run opened from the floor: what failed, with values and limits, read from across the room. */
export type FloorRunDetail = {
  id: number; serial: string; partNumber: string; lot: string; station: string; step: string; attempt: number; verdict: 'pass' | 'fail'
  startedAt: string; finishedAt: string; receivedAt: string; revision: number | null
  failing: FloorRunParameter[]
  /** parameters measured in all (the failing ones among them) */
  measured: number
  missingRequired: { name: string; qualifier: number | null }[]
  calibrationLapsed: boolean; measurementIssue: boolean
}

/** The snapshot route and the stream's first `snapshot` event. */
export type FloorSnapshot = { serverTime: string; lastRunId: number; stations: FloorStationView[]; lots: FloorLotView[]; recent: FloorRunEvent[] }
/** The stream's `lots` event, after new runs. */
export type FloorLotsEvent = { lots: FloorLotView[] }
/** The stream's `stations` event, after new runs. */
export type FloorStationsEvent = { stations: FloorStationView[] }

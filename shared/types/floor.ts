// The floor view: its first snapshot (GET /api/floor/snapshot) and the events of its stream (GET /api/floor/stream).
import type { ProportionInterval } from '../utils/yield'

export type FloorStationView = {
  name: string; location: string | null; lastSeenAt: string | null; runsToday: number
  lastRun: { verdict: 'pass' | 'fail'; finishedAt: string; serial: string; lot: string; step: string } | null
}

export type FloorStepYield = { step: string; units: number; runs: number; firstPass: number; firstPassYield: ProportionInterval | null }

export type FloorLotView = {
  code: string; partNumber: string; productName: string; status: string; plannedQty: number | null; unitsTested: number
  finalStep: string | null; finalFirstPassYield: ProportionInterval | null
  steps: FloorStepYield[]
}

/** One arriving run (the stream's `run` event). */
export type FloorRunEvent = { id: number; serial: string; part: string; lot: string; station: string; step: string; attempt: number; verdict: 'pass' | 'fail'; finishedAt: string }

/** The snapshot route and the stream's first `snapshot` event. */
export type FloorSnapshot = { serverTime: string; lastRunId: number; stations: FloorStationView[]; lots: FloorLotView[]; recent: FloorRunEvent[] }
/** The stream's `lots` event, after new runs. */
export type FloorLotsEvent = { lots: FloorLotView[] }
/** The stream's `stations` event, after new runs. */
export type FloorStationsEvent = { stations: FloorStationView[] }

// The floor view's data: a snapshot for first paint, then the runs arriving after it.
import type { Knex } from 'knex'
import type { FloorLotView, FloorRunEvent, FloorSnapshot, FloorStationView } from '../../../shared/types/floor'
import { wilsonInterval } from '../../../shared/utils/yield'
import { floorLots, floorStations, latestRuns, runsAfter, type FloorRunRow } from '../../database/repositories/floor'
import { plantToday } from '../plant-day'
import { advanceCursor, startCursor, type FeedCursor } from './floor-cursor'

export const RECENT_RUNS = 25
const BATCH = 200

export function runEvent(r: FloorRunRow): FloorRunEvent {
  return {
    id: r.id, serial: r.serial, part: r.part, lot: r.lot, station: r.station, step: r.step, attempt: r.attempt, verdict: r.verdict,
    startedAt: r.startedAt.toISOString(), finishedAt: r.finishedAt.toISOString(), receivedAt: r.receivedAt.toISOString(), failed: r.failed,
  }
}

export async function floorLotYields(db: Knex): Promise<FloorLotView[]> {
  return (await floorLots(db)).map((l) => {
    const order = (s: string) => { const i = l.steps.indexOf(s); return i < 0 ? 99 : i }
    const steps = [...l.stepStats].sort((a, b) => order(a.step) - order(b.step)).map((s) => ({
      step: s.step, units: s.units, runs: s.runs, firstPass: s.firstPass, firstPassYield: wilsonInterval(s.firstPass, s.units),
    }))
    const last = steps.find((s) => s.step === l.steps[l.steps.length - 1])
    return {
      code: l.code, partNumber: l.partNumber, productName: l.productName, status: l.status, plannedQty: l.plannedQty,
      unitsTested: Math.max(0, ...steps.map((s) => s.units)),
      finalStep: l.steps[l.steps.length - 1] ?? null,
      finalFirstPassYield: last?.firstPassYield ?? null,
      steps,
    }
  })
}

/** Stations with their runs since the plant day began (midnight in the plant's time zone, services/plant-day.ts). */
export async function floorStationView(db: Knex, now: Date): Promise<FloorStationView[]> {
  return (await floorStations(db, (await plantToday(db, now)).start)).map((s) => ({
    name: s.name, location: s.location, lastSeenAt: s.lastSeenAt?.toISOString() ?? null, runsToday: s.runsToday,
    lastRun: s.lastRun ? { ...s.lastRun, finishedAt: s.lastRun.finishedAt.toISOString() } : null,
  }))
}

// Runs of engineering lots stay off the floor like their lots; the cursor still steps over their ids, so they
// are never mistaken for gaps still to come.
const onFloor = (r: FloorRunRow) => !r.engineering

/** The snapshot and the feed cursor that continues from it (recent ids it did not see are kept as gaps). */
export async function floorSnapshot(db: Knex, now = new Date()): Promise<{ cursor: FeedCursor; snapshot: FloorSnapshot }> {
  const recent = await latestRuns(db, RECENT_RUNS)
  const ids = recent.map((r) => r.id)
  const cursor = ids.length ? advanceCursor(startCursor(Math.min(...ids) - 1), ids, now.getTime()) : startCursor(0)
  const [stations, lots] = await Promise.all([floorStationView(db, now), floorLotYields(db)])
  return {
    cursor,
    snapshot: { serverTime: now.toISOString(), lastRunId: cursor.lastId, stations, lots, recent: recent.filter(onFloor).map(runEvent) },
  }
}

/** Runs that became visible since the cursor, and the cursor after them. */
export async function pollRuns(db: Knex, cursor: FeedCursor, now = Date.now()): Promise<{ runs: FloorRunEvent[]; cursor: FeedCursor }> {
  const rows = await runsAfter(db, cursor.lastId, cursor.gaps.map((g) => g.id), BATCH)
  return { runs: rows.filter(onFloor).map(runEvent), cursor: advanceCursor(cursor, rows.map((r) => r.id), now) }
}

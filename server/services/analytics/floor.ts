// The floor view's data: a snapshot for first paint, then the runs arriving after it.
import type { Knex } from 'knex'
import type { FloorLotView, FloorRunEvent, FloorSnapshot, FloorStationView } from '../../../shared/types/floor'
import { wilsonInterval } from '../../../shared/utils/yield'
import { floorLots, floorStations, latestRuns, runKeysReceivedBetween, runsAfterKey, runsByIds, type FloorRunRow } from '../../database/repositories/floor'
import { plantToday } from '../plant-day'
import { advanceCursor, eventIds, keyAfter, lateRuns, OVERLAP_MS, startCursor, windowStart, type FeedCursor, type RunKey } from './floor-cursor'

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

// Runs of engineering lots stay off the floor like their lots; the cursor still counts them as sent.
const onFloor = (r: FloorRunRow) => !r.engineering
const keyOf = (r: FloorRunRow): RunKey => ({ id: r.id, at: r.receivedAt.getTime() })
// the look-back reads at most this many keys (index only); a burst beyond it within the window is not looked back on
const WINDOW_KEYS = 5000

/**
 * A cursor at `top` that counts every run visible now at or before it (within the look-back window) as sent: the
 * snapshot shows the latest of them, and a client resuming after `top` has the rest.
 */
async function cursorAt(db: Knex, top: { at: number; id: number }): Promise<FeedCursor> {
  const visible = await runKeysReceivedBetween(db, new Date(top.at - OVERLAP_MS), new Date(top.at), WINDOW_KEYS)
  return startCursor(top.at, top.id, visible.filter((r) => !keyAfter(r, top)))
}

/** The snapshot and the feed cursor that continues from it. */
export async function floorSnapshot(db: Knex, now = new Date()): Promise<{ cursor: FeedCursor; snapshot: FloorSnapshot }> {
  const recent = await latestRuns(db, RECENT_RUNS)
  const top = recent.length ? keyOf(recent[0]!) : { at: 0, id: 0 }
  const [cursor, stations, lots] = await Promise.all([cursorAt(db, top), floorStationView(db, now), floorLotYields(db)])
  return {
    cursor,
    snapshot: { serverTime: now.toISOString(), lastRunId: Math.max(0, ...recent.map((r) => r.id)), stations, lots, recent: recent.filter(onFloor).map(runEvent) },
  }
}

/** The cursor of a client that reconnects with the last event id it received (see floor-cursor.ts). */
export function resumeCursor(db: Knex, top: { at: number; id: number }): Promise<FeedCursor> {
  return cursorAt(db, top)
}

/**
 * Runs that became visible since the cursor, in the order sent (late ones first, then new ones by arrival), each with
 * its event id, and the cursor after them.
 */
export async function pollRuns(db: Knex, cursor: FeedCursor): Promise<{ runs: { run: FloorRunEvent; eventId: string }[]; cursor: FeedCursor }> {
  const [fresh, window] = await Promise.all([
    runsAfterKey(db, new Date(cursor.at), cursor.id, BATCH),
    runKeysReceivedBetween(db, new Date(windowStart(cursor)), new Date(cursor.at), WINDOW_KEYS),
  ])
  const late = await runsByIds(db, lateRuns(cursor, window).slice(0, BATCH).map((r) => r.id))
  const byKey = (a: FloorRunRow, b: FloorRunRow) => a.receivedAt.getTime() - b.receivedAt.getTime() || a.id - b.id
  const rows = [...late.sort(byKey), ...fresh]
  const ids = eventIds(cursor, rows.map(keyOf))
  const runs = rows.map((r, i) => ({ row: r, eventId: ids[i]! })).filter((x) => onFloor(x.row)).map((x) => ({ run: runEvent(x.row), eventId: x.eventId }))
  return { runs, cursor: advanceCursor(cursor, rows.map(keyOf)) }
}

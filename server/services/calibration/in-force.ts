// The instruments in force for a run at its test time and whether any was past calibration, read through a
// per-process cache that the database invalidates.
import type { Knex } from 'knex'
import { instrumentsHeldAt, judgeInstruments, type CalibrationDecision, type CalibrationSpan, type HoldingSpan } from '../../../shared/utils/calibration-history'
import { holdingsOfStations, instrumentsByAsset, readHistoryVersionCausal, spansOfInstruments } from '../../database/repositories/calibration'
import { RunRejected } from '../ingest/judge-run'

/** What a run write records: the decision, the history version it was made at, and whether the station named the instruments. */
export type RunCalibration = CalibrationDecision & { version: number; named: boolean }

/** A run named asset numbers Tercet does not know; pointers go into the run body. */
export class UnknownInstrumentAssets extends RunRejected {}

type StationHistory = { holdings: HoldingSpan[]; spans: CalibrationSpan[] }

/**
 * Everything cached was read at one history version; every change of holdings or records raises that version in
 * its own transaction, in whichever process made it. Each call costs one primary-key read of the version row
 * (about a tenth of a millisecond on a local server) and, only after a change anywhere, two reads per station or
 * named set to refill. Nothing is trusted past a version change, so no time-to-live is needed.
 */
let cached: { version: number; stations: Map<number, StationHistory>; assets: Map<string, number>; spans: Map<number, CalibrationSpan[]> } | undefined

/** The cache for this version; a newer one replaces it, an older reader gets a throw-away one and leaves it be. */
function cacheAt(version: number) {
  if (!cached || cached.version < version) cached = { version, stations: new Map(), assets: new Map(), spans: new Map() }
  return cached.version === version ? cached : { version, stations: new Map(), assets: new Map(), spans: new Map() }
}

async function stationHistory(db: Knex, stationId: number, version: number): Promise<StationHistory> {
  const c = cacheAt(version)
  const hit = c.stations.get(stationId)
  if (hit) return hit
  const holdings = await holdingsOfStations(db, [stationId])
  const spans = await spansOfInstruments(db, [...new Set(holdings.map((h) => h.instrumentId))])
  const history = { holdings, spans }
  c.stations.set(stationId, history)
  return history
}

async function namedHistory(db: Knex, named: readonly string[], version: number): Promise<{ ids: number[]; spans: CalibrationSpan[] }> {
  const c = cacheAt(version)
  const missing = named.filter((a) => !c.assets.has(a))
  if (missing.length) {
    for (const i of await instrumentsByAsset(db, missing)) c.assets.set(i.assetNumber, i.id)
    const unknown = named.map((a, n) => ({ a, n })).filter((x) => !c.assets.has(x.a))
    if (unknown.length) {
      throw new UnknownInstrumentAssets(`Unknown instrument asset number${unknown.length > 1 ? 's' : ''} ${unknown.map((x) => x.a).join(', ')}.`,
        unknown.map((x) => ({ pointer: `/instrumentAssets/${x.n}`, message: 'no instrument has this asset number' })))
    }
  }
  const ids = named.map((a) => c.assets.get(a)!)
  const need = ids.filter((id) => !c.spans.has(id))
  if (need.length) {
    const spans = await spansOfInstruments(db, need)
    for (const id of need) c.spans.set(id, spans.filter((s) => s.instrumentId === id))
  }
  return { ids, spans: ids.flatMap((id) => c.spans.get(id)!) }
}

// The version is read at most once a second per process, however many runs arrive: a run judged at a version that
// has since moved on is caught by the guard in its own transaction (run-links) and judged again, so a second-old
// version costs at most a second of runs a second look, never a wrong flag.
const VERSION_FRESH_MS = 1000
let versionRead: { at: number; value: Promise<number> } | undefined

function historyVersion(db: Knex): Promise<number> {
  const now = Date.now()
  if (versionRead && now - versionRead.at < VERSION_FRESH_MS) return versionRead.value
  const value = readHistoryVersionCausal(db)
  versionRead = { at: now, value }
  value.catch(() => { if (versionRead?.value === value) versionRead = undefined })
  return value
}

/** Forgets the version read, so that the next run reads it again (after a history change in this process). */
export function forgetHistoryVersion(): void {
  versionRead = undefined
}

/**
 * The instruments in force for a run of the station at `at` (its test time) and the calibration record of each:
 * those the station held then, or, when the run names them, the named ones wherever they were. Lapsed when any
 * was at or past its due date or had no record in force.
 */
export async function calibrationAt(db: Knex, stationId: number, at: Date, named?: readonly string[]): Promise<RunCalibration> {
  const version = await historyVersion(db)
  if (named && named.length) {
    const { ids, spans } = await namedHistory(db, named, version)
    return { ...judgeInstruments([...new Set(ids)].sort((a, b) => a - b), spans, at), version, named: true }
  }
  const { holdings, spans } = await stationHistory(db, stationId, version)
  return { ...judgeInstruments(instrumentsHeldAt(holdings, stationId, at), spans, at), version, named: false }
}

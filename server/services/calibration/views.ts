// Read models of the calibration history: a station's instruments with their holdings, records and the runs taken
// under each record; the registry; the instruments each run recorded.
import type { StationInstrument } from '../../../shared/types/station'
import type { Knex } from 'knex'
import type {
  CalibrationRecordView, InstrumentHistoryView, InstrumentListItem, RecordRunsView, RunInstrumentView, StationCalibrationView,
} from '../../../shared/types/calibration'
import { calibrationState, type CalibrationState } from '../../../shared/utils/calibration'
import { recordInForce } from '../../../shared/utils/calibration-history'
import { calibrationDueSoonDays } from '../settings'
import {
  holdingsOfInstruments, holdingsOfStations, instrumentsById, listInstrumentsWithStation, recordsOfInstruments, spansOfInstruments, stationNames, stationRef,
  type CalibrationRow, type HoldingRow, type InstrumentRow,
} from '../../database/repositories/calibration'
import { instrumentsOfRuns, latestRunsByRecord, runCountsByRecord, type RecentRun, type RecordRunCount } from '../../database/repositories/calibration-runs'

const LATEST_RUNS = 3
const iso = (d: Date) => new Date(d).toISOString()

/** An instrument as the station pages list it: its state now, from the record in force now. */
/** An instrument a station holds now (the station page's StationInstrument). */
export type CurrentInstrument = StationInstrument

function stateNow(records: Parameters<typeof recordInForce>[0], instrumentId: number, now: Date, dueSoonDays: number): { dueAt: Date | null; state: CalibrationState } {
  const r = recordInForce(records, instrumentId, now)
  // no record in force: runs taken now would be flagged, so the page says lapsed too
  return r ? { dueAt: r.dueAt, state: calibrationState(r.dueAt, now, dueSoonDays) } : { dueAt: null, state: 'lapsed' }
}

/** The instruments each station holds now, with the state of the record in force now. */
export async function currentInstrumentsOfStations(db: Knex, stationIds: readonly number[], now = new Date()): Promise<Map<number, CurrentInstrument[]>> {
  const open = (await holdingsOfStations(db, stationIds)).filter((h) => h.until === null && h.from.getTime() <= now.getTime())
  const instruments = new Map((await instrumentsById(db, [...new Set(open.map((h) => h.instrumentId))])).map((i) => [i.id, i]))
  const [spans, dueSoonDays] = await Promise.all([spansOfInstruments(db, [...instruments.keys()]), calibrationDueSoonDays(db)])
  const out = new Map<number, CurrentInstrument[]>(stationIds.map((id) => [id, []]))
  for (const h of open) {
    const i = instruments.get(h.instrumentId)!
    const s = stateNow(spans, i.id, now, dueSoonDays)
    out.get(h.stationId)!.push({ id: i.id, assetNumber: i.assetNumber, kind: i.kind, model: i.model, serial: i.serial, calibrationDue: s.dueAt ? iso(s.dueAt) : null, state: s.state })
  }
  for (const list of out.values()) list.sort((a, b) => (a.calibrationDue ?? '').localeCompare(b.calibrationDue ?? '') || a.assetNumber.localeCompare(b.assetNumber))
  return out
}

function runsView(count: RecordRunCount | undefined, latest: RecentRun[]): RecordRunsView {
  return {
    count: count?.runs ?? 0, pastDue: count?.pastDue ?? 0, lastStartedAt: count?.lastStartedAt ? iso(count.lastStartedAt) : null,
    latest: latest.map((r) => ({ id: r.runUuid, serial: r.serial, lot: r.lot, station: r.station, startedAt: iso(r.startedAt), pastDue: r.pastDue })),
  }
}

function recordView(r: CalibrationRow, inForceNow: boolean, runs: RecordRunsView): CalibrationRecordView {
  return {
    id: r.id, certificateNumber: r.certificateNumber, laboratory: r.laboratory, asFound: r.asFound,
    calibratedOn: iso(r.calibratedOn), dueAt: iso(r.dueAt), enteredAt: iso(r.createdAt), enteredBy: r.createdBy,
    superseded: r.supersededFrom ? { from: iso(r.supersededFrom), reason: r.supersededReason, at: r.supersededAt ? iso(r.supersededAt) : null, by: r.supersededBy } : null,
    certificate: r.certificateBytes === null ? null : { bytes: r.certificateBytes, href: `/api/calibrations/${r.id}/certificate` },
    inForceNow, runs, impactId: r.impactId,
  }
}

/** A station's instruments, current and former, each with its whole history and the runs taken under each record. */
export async function stationCalibration(db: Knex, stationId: number, now = new Date()): Promise<StationCalibrationView | undefined> {
  if (!(await stationRef(db, stationId))) return undefined
  const own = await holdingsOfStations(db, [stationId])
  const ids = [...new Set(own.map((h) => h.instrumentId))]
  const [instruments, holdings, records, counts, latest, dueSoonDays] = await Promise.all([
    instrumentsById(db, ids), holdingsOfInstruments(db, ids), recordsOfInstruments(db, ids), runCountsByRecord(db, ids), latestRunsByRecord(db, ids, LATEST_RUNS),
    calibrationDueSoonDays(db),
  ])
  const names = await stationNames(db, [...new Set(holdings.map((h) => h.stationId))])
  const key = (instrumentId: number, calibrationId: number | null) => `${instrumentId}:${calibrationId}`
  const countOf = new Map(counts.map((c) => [key(c.instrumentId, c.calibrationId), c]))
  const latestOf = new Map<string, RecentRun[]>()
  for (const r of latest) latestOf.set(key(r.instrumentId, r.calibrationId), [...(latestOf.get(key(r.instrumentId, r.calibrationId)) ?? []), r])

  const view = (i: InstrumentRow): InstrumentHistoryView => {
    const mine = records.filter((r) => r.instrumentId === i.id)
    const inForce = recordInForce(mine, i.id, now)
    const spans = holdings.filter((h) => h.instrumentId === i.id)
    const open = spans.find((h) => h.until === null)
    const s = stateNow(mine, i.id, now, dueSoonDays)
    return {
      id: i.id, assetNumber: i.assetNumber, kind: i.kind, model: i.model, serial: i.serial,
      currentStation: open ? { id: open.stationId, name: names.get(open.stationId) ?? String(open.stationId) } : null,
      state: s.state, dueAt: s.dueAt ? iso(s.dueAt) : null,
      holdings: spans.map((h: HoldingRow) => ({ id: h.id, stationId: h.stationId, station: names.get(h.stationId) ?? String(h.stationId), from: iso(h.from), until: h.until ? iso(h.until) : null })).reverse(),
      records: mine.map((r) => recordView(r, r.id === inForce?.id, runsView(countOf.get(key(i.id, r.id)), latestOf.get(key(i.id, r.id)) ?? []))).reverse(),
      runsWithoutRecord: runsView(countOf.get(key(i.id, null)), latestOf.get(key(i.id, null)) ?? []),
    }
  }
  const holdsNow = (id: number) => own.some((h) => h.instrumentId === id && h.until === null)
  return {
    stationId,
    current: instruments.filter((i) => holdsNow(i.id)).map(view),
    former: instruments.filter((i) => !holdsNow(i.id)).map(view),
  }
}

/** Every registered instrument and where it is now, for the install and move forms. */
export async function instrumentRegistry(db: Knex): Promise<InstrumentListItem[]> {
  return (await listInstrumentsWithStation(db)).map((i) => ({ id: i.id, assetNumber: i.assetNumber, kind: i.kind, model: i.model, serial: i.serial, station: i.station }))
}

/** The instruments each run recorded, by the run's internal id. */
export async function runInstrumentViews(db: Knex, runIds: readonly number[]): Promise<Map<number, RunInstrumentView[]>> {
  const out = new Map<number, RunInstrumentView[]>()
  for (const r of await instrumentsOfRuns(db, runIds)) {
    out.set(r.runId, [...(out.get(r.runId) ?? []), {
      assetNumber: r.assetNumber, kind: r.kind, model: r.model, serial: r.serial, named: r.named,
      calibration: r.calibrationId === null ? null : { certificateNumber: r.certificateNumber, laboratory: r.laboratory, calibratedOn: iso(r.calibratedOn!), dueAt: iso(r.dueAt!) },
      pastDue: r.dueAt === null || new Date(r.startedAt).getTime() >= new Date(r.dueAt).getTime(),
    }])
  }
  return out
}

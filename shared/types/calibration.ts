// What the instrument and calibration routes answer, as services build it and pages read it. Times are ISO 8601 UTC.
import type { CalibrationState } from '../utils/calibration'

export type AsFoundResult = 'in_tolerance' | 'out_of_tolerance'

/** A run taken under a calibration record, as listed beside it; pastDue: at or after that record's due date (or with none in force). */
export type RecordRunView = { id: string; serial: string; lot: string; station: string; startedAt: string; pastDue: boolean }

/** Runs taken under one record (or under none, for an instrument with no record in force). */
export type RecordRunsView = { count: number; pastDue: number; lastStartedAt: string | null; latest: RecordRunView[] }

export type CalibrationRecordView = {
  id: number
  certificateNumber: string | null
  laboratory: string | null
  asFound: AsFoundResult | null
  calibratedOn: string
  dueAt: string
  enteredAt: string
  enteredBy: string | null
  superseded: { from: string; reason: string | null; at: string | null; by: string | null } | null
  /** bytes of the certificate PDF kept with the record, and where to fetch it */
  certificate: { bytes: number; href: string } | null
  inForceNow: boolean
  runs: RecordRunsView
  /** the impact review of a record found out of tolerance (null until one is opened, on the record's entry or first view) */
  impactId: number | null
}

export type HoldingView = { id: number; stationId: number; station: string; from: string; until: string | null }

export type InstrumentHistoryView = {
  id: number
  assetNumber: string
  kind: string
  model: string
  serial: string
  /** the station holding it now, if any (maybe not the station whose page this is) */
  currentStation: { id: number; name: string } | null
  state: CalibrationState
  dueAt: string | null
  holdings: HoldingView[]
  records: CalibrationRecordView[]
  runsWithoutRecord: RecordRunsView
}

/** A station's instruments, those it holds now first, then those it held before. */
export type StationCalibrationView = { stationId: number; current: InstrumentHistoryView[]; former: InstrumentHistoryView[] }

export type InstrumentListItem = { id: number; assetNumber: string; kind: string; model: string; serial: string; station: { id: number; name: string } | null }

/** An instrument a run recorded, with the calibration record in force for it at the run's test time. */
export type RunInstrumentView = {
  assetNumber: string; kind: string; model: string; serial: string
  /** the station listed it in its post, rather than Tercet reading it from the station's holdings */
  named: boolean
  calibration: { certificateNumber: string | null; laboratory: string | null; calibratedOn: string; dueAt: string } | null
  pastDue: boolean
}

/** What a history change did to stored runs. */
export type RejudgeSummaryView = { runs: number; relinked: number; nowLapsed: number; nowInCalibration: number; lots: string[] }

/** What each history change answers (inside { instrument }, { move }, { holding } or { record }). */
export type InstrumentAdded = { id: number; assetNumber: string; kind: string; model: string; serial: string; rejudged: RejudgeSummaryView | null }
export type InstrumentMoved = { instrumentId: number; station: { id: number; name: string } | null; at: string; rejudged: RejudgeSummaryView }
export type HoldingCorrected = { holdingId: number; from: string; until: string | null; rejudged: RejudgeSummaryView }
/** impactId: the review opened for a record found out of tolerance */
export type CalibrationAdded = { id: number; instrumentId: number; rejudged: RejudgeSummaryView; impactId: number | null }
export type CalibrationSuperseded = { id: number; supersededFrom: string; rejudged: RejudgeSummaryView }

// Stations as the station pages read them (GET /api/stations, GET /api/stations/:id).
import type { CalibrationState } from '../utils/calibration'

/** An instrument a station holds now, with the state of its calibration record in force now. */
export type StationInstrument = { id: number; assetNumber: string; kind: string; model: string; serial: string; calibrationDue: string | null; state: CalibrationState }

export type StationToken = { id: number; hint: string; createdAt: string; createdBy: string | null; revokedAt: string | null; lastUsedAt: string | null }

export type StationSummary = {
  id: number; name: string; location: string | null; description: string | null; lastSeenAt: string | null; createdAt: string
  runsToday: number; lastVerdict: 'pass' | 'fail' | null; activeTokenHint: string | null; owner: { id: number; name: string } | null
  instruments: StationInstrument[]; calibrationState: CalibrationState | null
}

export type StationDetail = StationSummary & { tokens: StationToken[] }

/** POST /api/stations — the token is shown this once */
export type StationCreated = { station: StationSummary; token: string }

// Historical imports as the routes answer them and the imports page reads them.
export type ImportFormat = 'jsonl' | 'csv'
export type ImportStatus = 'running' | 'done' | 'failed' | 'cancelled'

export type ImportCounts = { linesDone: number; runsDone: number; runsCreated: number; runsReplayed: number; runsRejected: number }

/** One line of the file that was not stored, and why. */
export type ImportRejection = { line: number; runId: string | null; status: number; reason: string }

export type ImportJob = ImportCounts & {
  id: string
  format: ImportFormat
  fileName: string
  status: ImportStatus
  station: { id: number; name: string }
  createdBy: { id: number; name: string }
  linesTotal: number | null
  startedAt: string
  updatedAt: string
  finishedAt: string | null
  error: string | null
  /** someone asked to stop the import: set until its worker stops, and kept afterwards */
  cancelRequestedAt: string | null
  cancelledBy: { id: number; name: string } | null
  /** the size of the upload as received and kept until the import ends */
  uploadBytes: number | null
  /** how many times another server (or a restarted one) carried the import on from its last recorded line */
  resumes: number
  /** running, but its counters stopped moving and no server has taken it on */
  stalled: boolean
}

/** GET /api/imports/:id — the job and its first rejected lines. */
export type ImportJobDetail = ImportJob & { rejections: ImportRejection[] }
/** GET /api/imports — the latest jobs, newest first. */
export type ImportList = { imports: ImportJob[] }
/** POST /api/imports — 202 once the file is received whole. */
export type ImportStarted = { jobId: string; job: ImportJob }
/** The fields of a station (GET /api/stations) the import form offers to choose from. */
export type ImportStationChoice = { id: number; name: string; location: string | null }

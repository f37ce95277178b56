import type { Knex } from 'knex'
import type { ImportCounts, ImportFormat, ImportJob, ImportRejection, ImportStatus } from '../../../shared/types/imports'

export type { ImportCounts, ImportFormat, ImportStatus }

/** The job as stored: the answer's fields with its instants as dates, and without what the service derives (stalled). */
export type ImportJobRow = Omit<ImportJob, 'startedAt' | 'updatedAt' | 'finishedAt' | 'cancelRequestedAt' | 'stalled'> & {
  startedAt: Date
  updatedAt: Date
  finishedAt: Date | null
  cancelRequestedAt: Date | null
}

export type RejectionRow = ImportRejection

export async function findStationByName(db: Knex, name: string): Promise<{ id: number; name: string } | undefined> {
  const r = await db('stations').where({ name }).first('id', 'name')
  return r ? { id: r.id, name: r.name } : undefined
}

/** The job of an upload that is starting to arrive; it is listed once the file is received whole (markUploadReceived). */
export async function insertImportJob(db: Knex, j: { id: string; createdBy: number; stationId: number; fileName: string; format: ImportFormat }): Promise<void> {
  await db('import_jobs').insert({ id: j.id, created_by: j.createdBy, station_id: j.stationId, file_name: j.fileName, format: j.format })
}

function countColumns(c: ImportCounts) {
  return { lines_done: c.linesDone, runs_done: c.runsDone, runs_created: c.runsCreated, runs_replayed: c.runsReplayed, runs_rejected: c.runsRejected }
}

export async function insertRejections(db: Knex, jobId: string, rows: RejectionRow[]): Promise<void> {
  if (!rows.length) return
  await db('import_rejections').insert(rows.map((r) => ({ job_id: jobId, line_number: r.line, run_id: r.runId, status: r.status, reason: r.reason })))
}

export async function updateImportProgress(db: Knex, jobId: string, c: ImportCounts): Promise<void> {
  await db('import_jobs').where({ id: jobId }).update({ ...countColumns(c), updated_at: db.fn.now(3) })
}

export async function finishImportJob(db: Knex, jobId: string, status: 'done' | 'failed' | 'cancelled', c: ImportCounts, error: string | null): Promise<void> {
  await db('import_jobs').where({ id: jobId }).update({ ...countColumns(c), status, error, updated_at: db.fn.now(3), finished_at: db.fn.now(3) })
}

/** Records a request to stop a running job; its worker sees it at its next progress write. */
export async function requestImportCancel(db: Knex, jobId: string, userId: number): Promise<void> {
  await db('import_jobs').where({ id: jobId, status: 'running' }).whereNull('cancel_requested_at')
    .update({ cancel_requested_at: db.fn.now(3), cancelled_by: userId })
}

export async function markImportCancelled(db: Knex, jobId: string, userId: number, error: string): Promise<void> {
  await db('import_jobs').where({ id: jobId })
    .update({ status: 'cancelled', cancel_requested_at: db.fn.now(3), cancelled_by: userId, error, updated_at: db.fn.now(3), finished_at: db.fn.now(3) })
}

export async function isCancelRequested(db: Knex, jobId: string): Promise<boolean> {
  const r = await db('import_jobs').where({ id: jobId }).first('cancel_requested_at')
  return !!r?.cancel_requested_at
}

function base(db: Knex) {
  return db('import_jobs as j')
    .join('stations as s', 's.id', 'j.station_id')
    .join('users as u', 'u.id', 'j.created_by')
    .leftJoin('users as c', 'c.id', 'j.cancelled_by')
    .select('j.*', 's.name as station_name', 'u.name as user_name', 'c.name as cancelled_by_name')
    .whereNotNull('j.received_at')
}

function toJob(r: any): ImportJobRow {
  return {
    id: r.id, format: r.format, fileName: r.file_name, status: r.status,
    station: { id: r.station_id, name: r.station_name }, createdBy: { id: r.created_by, name: r.user_name },
    linesTotal: r.lines_total ?? null, linesDone: r.lines_done, runsDone: r.runs_done, runsCreated: r.runs_created,
    runsReplayed: r.runs_replayed, runsRejected: r.runs_rejected,
    startedAt: r.started_at, updatedAt: r.updated_at, finishedAt: r.finished_at ?? null, error: r.error ?? null,
    cancelRequestedAt: r.cancel_requested_at ?? null, cancelledBy: r.cancelled_by ? { id: r.cancelled_by, name: r.cancelled_by_name ?? '' } : null,
    uploadBytes: r.upload_bytes === null || r.upload_bytes === undefined ? null : Number(r.upload_bytes), resumes: Number(r.resumes ?? 0),
  }
}

export async function findImportJob(db: Knex, id: string): Promise<ImportJobRow | undefined> {
  const r = await base(db).where('j.id', id).first()
  return r ? toJob(r) : undefined
}

/** Locks the job's own row (not the station and user rows it joins) for a status change. */
export async function lockImportJob(trx: Knex.Transaction, id: string): Promise<boolean> {
  return (await trx('import_jobs').where({ id }).forUpdate().first('id')) !== undefined
}

/** Unfinished jobs first, so a stalled one never drops off the list behind newer finished ones. */
export async function listImportJobs(db: Knex, limit: number): Promise<ImportJobRow[]> {
  return (await base(db).orderByRaw("j.status = 'running' DESC").orderBy('j.started_at', 'desc').orderBy('j.id').limit(limit)).map(toJob)
}

/** Rejections in line order, after the row with internal id `after` (keyset paging). */
export async function listRejections(db: Knex, jobId: string, limit: number, after = 0): Promise<(RejectionRow & { seq: number })[]> {
  const rows = await db('import_rejections').where({ job_id: jobId }).where('id', '>', after).orderBy('id').limit(limit)
  return rows.map((r: any) => ({ seq: Number(r.id), line: r.line_number, runId: r.run_id ?? null, status: r.status, reason: r.reason }))
}

// The link between runs and the instruments they were taken with: statements for the run write path, the queries
// that find runs a history change touches, and the reads behind the station and unit pages.
import type { Knex } from 'knex'
import type { Statement } from '../raw-connection'
import type { RunRef } from './run-writes'

export type RunInstrumentRow = { runId: RunRef; instrumentId: number; calibrationId: number | null; named?: boolean }

/**
 * One multi-row insert of run ↔ instrument links, with the calibration record in force for each (null: none was).
 * `named` marks links the station listed in its post. With no rows it is a statement that does nothing, so a writer
 * may always append it.
 */
export function runInstrumentsInsert(rows: readonly RunInstrumentRow[]): Statement {
  if (!rows.length) return { sql: 'DO 0', values: [] }
  const values: unknown[] = []
  for (const r of rows) values.push(r.runId, r.instrumentId, r.calibrationId, r.named ? 1 : 0)
  return { sql: `INSERT INTO run_instruments (run_id, instrument_id, calibration_id, named) VALUES ${rows.map(() => '(?, ?, ?, ?)').join(', ')}`, values }
}

/**
 * Guards runs judged at history version `version`: takes a shared lock on the version row until commit (a history
 * change, which raises it, waits for these runs and then sees them) and queues the runs for judging again when the
 * version moved on between their judgement and now.
 */
export function calibrationGuard(runIds: readonly RunRef[], version: number): Statement {
  if (!Number.isSafeInteger(version)) throw new TypeError('the history version must be an integer')
  return {
    sql: `SELECT version FROM calibration_history_version WHERE id = 1 LOCK IN SHARE MODE;
      INSERT IGNORE INTO calibration_rejudge (run_id) SELECT r.id FROM test_runs r JOIN calibration_history_version v ON v.id = 1 AND v.version <> ?
        WHERE r.id IN (${runIds.map(() => '?').join(', ')})`,
    values: [version, ...runIds],
  }
}

export type CandidateRun = { id: number; stationId: number; startedAt: Date; lapsed: boolean }
const candidate = (r: any): CandidateRun => ({ id: Number(r.id), stationId: r.station_id, startedAt: r.started_at, lapsed: !!r.calibration_lapsed })

/** Runs linked to any of the instruments and tested at or after `since`. */
export async function runsLinkedTo(db: Knex, instrumentIds: readonly number[], since: Date): Promise<CandidateRun[]> {
  if (!instrumentIds.length) return []
  const rows = await db('run_instruments as ri').join('test_runs as r', 'r.id', 'ri.run_id')
    .whereIn('ri.instrument_id', instrumentIds).where('r.started_at', '>=', since).distinct('r.id', 'r.station_id', 'r.started_at', 'r.calibration_lapsed')
  return rows.map(candidate)
}

/** Runs of the stations tested in [since, until) whose instruments Tercet read from the holdings (none named). */
export async function unnamedRunsOfStations(db: Knex, stationIds: readonly number[], since: Date, until: Date | null): Promise<CandidateRun[]> {
  if (!stationIds.length) return []
  const q = db('test_runs as r').whereIn('r.station_id', stationIds)
    // finished_at is never before started_at: this bound lets the (station_id, finished_at) index narrow the scan
    .where('r.finished_at', '>=', since).where('r.started_at', '>=', since)
    .whereNotExists(db('run_instruments as n').whereRaw('n.run_id = r.id').where('n.named', true))
    .select('r.id', 'r.station_id', 'r.started_at', 'r.calibration_lapsed')
  if (until) q.where('r.started_at', '<', until)
  return (await q).map(candidate)
}

/** Runs by id, for judging queued runs again. */
export async function runsById(db: Knex, ids: readonly number[]): Promise<CandidateRun[]> {
  if (!ids.length) return []
  return (await db('test_runs').whereIn('id', ids).select('id', 'station_id', 'started_at', 'calibration_lapsed')).map(candidate)
}

export type StoredLink = { runId: number; instrumentId: number; calibrationId: number | null; named: boolean }

export async function linksOfRuns(db: Knex, runIds: readonly number[]): Promise<StoredLink[]> {
  if (!runIds.length) return []
  const rows = await db('run_instruments').whereIn('run_id', runIds).orderBy('run_id').orderBy('instrument_id')
  return rows.map((r: any) => ({ runId: Number(r.run_id), instrumentId: r.instrument_id, calibrationId: r.calibration_id ?? null, named: !!r.named }))
}

export async function deleteLinks(db: Knex, runIds: readonly number[]): Promise<void> {
  if (runIds.length) await db('run_instruments').whereIn('run_id', runIds).delete()
}

export async function setRunsLapsed(db: Knex, runIds: readonly number[], lapsed: boolean): Promise<void> {
  if (runIds.length) await db('test_runs').whereIn('id', runIds).update({ calibration_lapsed: lapsed })
}

/** Codes of the lots the runs belong to. */
export async function lotCodesOfRuns(db: Knex, runIds: readonly number[]): Promise<string[]> {
  if (!runIds.length) return []
  const rows = await db('test_runs as r').join('lots as l', 'l.id', 'r.lot_id').whereIn('r.id', runIds).distinct('l.code').orderBy('l.code')
  return rows.map((r: any) => r.code)
}

export async function queuedRejudges(db: Knex, limit: number): Promise<number[]> {
  return (await db('calibration_rejudge').orderBy('run_id').limit(limit).select('run_id')).map((r: any) => Number(r.run_id))
}

/** Takes the queued runs out of the queue; locks their rows so two processes never judge the same runs at once. */
export async function claimRejudges(trx: Knex.Transaction, runIds: readonly number[]): Promise<number[]> {
  if (!runIds.length) return []
  const rows = await trx('calibration_rejudge').whereIn('run_id', runIds).forUpdate().select('run_id')
  const ids = rows.map((r: any) => Number(r.run_id))
  if (ids.length) await trx('calibration_rejudge').whereIn('run_id', ids).delete()
  return ids
}

// ---- reads for the pages ------------------------------------------------------------------------------------------

export type RunInstrumentDetail = {
  runId: number; startedAt: Date; instrumentId: number; assetNumber: string; kind: string; model: string; serial: string; named: boolean
  calibrationId: number | null; certificateNumber: string | null; laboratory: string | null; calibratedOn: Date | null; dueAt: Date | null
}

/** The instruments each run recorded, with the calibration record in force for each. */
export async function instrumentsOfRuns(db: Knex, runIds: readonly number[]): Promise<RunInstrumentDetail[]> {
  if (!runIds.length) return []
  const rows = await db('run_instruments as ri').join('instruments as i', 'i.id', 'ri.instrument_id').join('test_runs as r', 'r.id', 'ri.run_id')
    .leftJoin('calibration_records as c', 'c.id', 'ri.calibration_id')
    .whereIn('ri.run_id', runIds).orderBy('ri.run_id').orderBy('i.asset_number')
    .select('ri.run_id', 'r.started_at', 'ri.named', 'i.id', 'i.asset_number', 'i.kind', 'i.model', 'i.serial', 'c.id as calibration_id',
      'c.certificate_number', 'c.laboratory', 'c.calibrated_on', 'c.due_at')
  return rows.map((r: any) => ({
    runId: Number(r.run_id), startedAt: r.started_at, instrumentId: r.id, assetNumber: r.asset_number, kind: r.kind, model: r.model, serial: r.serial, named: !!r.named,
    calibrationId: r.calibration_id ?? null, certificateNumber: r.certificate_number ?? null, laboratory: r.laboratory ?? null,
    calibratedOn: r.calibrated_on ?? null, dueAt: r.due_at ?? null,
  }))
}

export type RecordRunCount = { instrumentId: number; calibrationId: number | null; runs: number; pastDue: number; lastStartedAt: Date | null }

/** Per instrument and calibration record: how many runs were taken under it, and how many of them at or past its due date. */
export async function runCountsByRecord(db: Knex, instrumentIds: readonly number[]): Promise<RecordRunCount[]> {
  if (!instrumentIds.length) return []
  const rows = await db('run_instruments as ri').join('test_runs as r', 'r.id', 'ri.run_id')
    .leftJoin('calibration_records as c', 'c.id', 'ri.calibration_id')
    .whereIn('ri.instrument_id', instrumentIds).groupBy('ri.instrument_id', 'ri.calibration_id')
    .select('ri.instrument_id', 'ri.calibration_id', db.raw('COUNT(*) AS runs'),
      db.raw('SUM(c.id IS NULL OR r.started_at >= c.due_at) AS past_due'), db.raw('MAX(r.started_at) AS last_started'))
  return rows.map((r: any) => ({
    instrumentId: r.instrument_id, calibrationId: r.calibration_id ?? null, runs: Number(r.runs), pastDue: Number(r.past_due ?? 0), lastStartedAt: r.last_started ?? null,
  }))
}

export type RecentRun = { instrumentId: number; calibrationId: number | null; runUuid: string; serial: string; lot: string; station: string; startedAt: Date; pastDue: boolean }

/** The latest few runs under each instrument and calibration record, each with whether it was taken at or past that record's due date. */
export async function latestRunsByRecord(db: Knex, instrumentIds: readonly number[], perRecord: number): Promise<RecentRun[]> {
  if (!instrumentIds.length) return []
  const [rows] = await db.raw(`SELECT x.* FROM (
      SELECT ri.instrument_id, ri.calibration_id, r.uuid, u.serial, l.code AS lot, s.name AS station, r.started_at,
        (c.id IS NULL OR r.started_at >= c.due_at) AS past_due,
        ROW_NUMBER() OVER (PARTITION BY ri.instrument_id, ri.calibration_id ORDER BY r.started_at DESC, r.id DESC) AS n
      FROM run_instruments ri JOIN test_runs r ON r.id = ri.run_id LEFT JOIN calibration_records c ON c.id = ri.calibration_id JOIN units u ON u.id = r.unit_id
        JOIN lots l ON l.id = r.lot_id JOIN stations s ON s.id = r.station_id
      WHERE ri.instrument_id IN (${instrumentIds.map(() => '?').join(', ')})
    ) x WHERE x.n <= ? ORDER BY x.instrument_id, x.calibration_id, x.n`, [...instrumentIds, perRecord])
  return (rows as any[]).map((r) => ({
    instrumentId: r.instrument_id, calibrationId: r.calibration_id ?? null, runUuid: r.uuid, serial: r.serial, lot: r.lot, station: r.station,
    startedAt: r.started_at, pastDue: !!r.past_due,
  }))
}

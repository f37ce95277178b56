import type { Knex } from 'knex'
import type { CalibrationSpan, HoldingSpan } from '../../../shared/utils/calibration-history'
import { causalRows } from '../causal-read'

export type InstrumentRow = { id: number; assetNumber: string; kind: string; model: string; serial: string; createdAt: Date }
export type HoldingRow = HoldingSpan & { id: number }
export type AsFound = 'in_tolerance' | 'out_of_tolerance'
export type CalibrationRow = CalibrationSpan & {
  certificateNumber: string | null; laboratory: string | null; asFound: AsFound | null; createdAt: Date; createdBy: string | null
  supersededReason: string | null; supersededAt: Date | null; supersededBy: string | null; certificateBytes: number | null
  /** the impact review opened for a record found out of tolerance */
  impactId: number | null
}

const instrument = (r: any): InstrumentRow => ({ id: r.id, assetNumber: r.asset_number, kind: r.kind, model: r.model, serial: r.serial, createdAt: r.created_at })
const holding = (r: any): HoldingRow => ({ id: r.id, instrumentId: r.instrument_id, stationId: r.station_id, from: r.from_at, until: r.until_at ?? null })
const span = (r: any): CalibrationSpan => ({ id: r.id, instrumentId: r.instrument_id, calibratedOn: r.calibrated_on, dueAt: r.due_at, supersededFrom: r.superseded_from ?? null })

// ---- the history version: one row, raised by every change of holdings or records -------------------------------

/** The current version of the calibration history: one primary-key read. */
export async function readHistoryVersion(db: Knex): Promise<number> {
  const [rows] = await db.raw('SELECT version FROM calibration_history_version WHERE id = 1')
  return Number(rows[0].version)
}

/** The same as a causal read on a cluster, for the per-process cache of in-force.ts (outside any transaction). */
export async function readHistoryVersionCausal(db: Knex): Promise<number> {
  const [row] = await causalRows<{ version: number | string }>(db, 'SELECT version FROM calibration_history_version WHERE id = 1')
  return Number(row!.version)
}

/**
 * Raises the version and keeps its row locked until commit. Run writes take a shared lock on the same row, so a
 * history change waits for runs in flight to commit (and then sees them), and runs wait for the change to commit.
 */
/** A shared lock on the version row until commit: no history change can commit meanwhile. */
export async function shareLockHistoryVersion(trx: Knex.Transaction): Promise<void> {
  await trx.raw('SELECT version FROM calibration_history_version WHERE id = 1 LOCK IN SHARE MODE')
}

export async function raiseHistoryVersion(trx: Knex.Transaction): Promise<number> {
  await trx.raw('UPDATE calibration_history_version SET version = version + 1 WHERE id = 1')
  return readHistoryVersion(trx)
}

// ---- instruments -------------------------------------------------------------------------------------------------

export async function insertInstrument(db: Knex, i: { assetNumber: string; kind: string; model: string; serial: string; createdBy: number | null }): Promise<number> {
  const [id] = await db('instruments').insert({ asset_number: i.assetNumber, kind: i.kind, model: i.model, serial: i.serial, created_by: i.createdBy })
  return id!
}

/** Locks the instrument for the rest of the transaction: changes of one instrument's history queue up. */
export async function lockInstrument(trx: Knex.Transaction, id: number): Promise<InstrumentRow | undefined> {
  const r = await trx('instruments').where({ id }).forUpdate().first()
  return r ? instrument(r) : undefined
}

export async function findInstrument(db: Knex, id: number): Promise<InstrumentRow | undefined> {
  const r = await db('instruments').where({ id }).first()
  return r ? instrument(r) : undefined
}

/** Instruments by asset number (exact, as stored). */
export async function instrumentsByAsset(db: Knex, assets: readonly string[]): Promise<InstrumentRow[]> {
  if (!assets.length) return []
  return (await db('instruments').whereIn('asset_number', assets)).map(instrument)
}

/** Every instrument with the station that holds it now, if any. */
export async function listInstrumentsWithStation(db: Knex): Promise<(InstrumentRow & { station: { id: number; name: string } | null })[]> {
  const rows = await db('instruments as i')
    .leftJoin('instrument_holdings as h', function () { this.on('h.instrument_id', 'i.id').andOnNull('h.until_at') })
    .leftJoin('stations as s', 's.id', 'h.station_id')
    .orderBy('i.asset_number').select('i.*', 's.id as station_id', 's.name as station_name')
  return rows.map((r: any) => ({ ...instrument(r), station: r.station_id ? { id: r.station_id, name: r.station_name } : null }))
}

export async function instrumentsById(db: Knex, ids: readonly number[]): Promise<InstrumentRow[]> {
  if (!ids.length) return []
  return (await db('instruments').whereIn('id', ids).orderBy('asset_number')).map(instrument)
}

// ---- holdings ----------------------------------------------------------------------------------------------------

export async function holdingsOfInstrument(db: Knex, instrumentId: number): Promise<HoldingRow[]> {
  return (await db('instrument_holdings').where({ instrument_id: instrumentId }).orderBy('from_at').orderBy('id')).map(holding)
}

/** Every holding, past and present, of the given stations. */
export async function holdingsOfStations(db: Knex, stationIds: readonly number[]): Promise<HoldingRow[]> {
  if (!stationIds.length) return []
  return (await db('instrument_holdings').whereIn('station_id', stationIds).orderBy('from_at').orderBy('id')).map(holding)
}

/** Every holding of the given instruments, at whatever station. */
export async function holdingsOfInstruments(db: Knex, instrumentIds: readonly number[]): Promise<HoldingRow[]> {
  if (!instrumentIds.length) return []
  return (await db('instrument_holdings').whereIn('instrument_id', instrumentIds).orderBy('from_at').orderBy('id')).map(holding)
}

export async function insertHolding(db: Knex, h: { instrumentId: number; stationId: number; from: Date; until: Date | null }): Promise<number> {
  const [id] = await db('instrument_holdings').insert({ instrument_id: h.instrumentId, station_id: h.stationId, from_at: h.from, until_at: h.until })
  return id!
}

export async function updateHolding(db: Knex, id: number, h: { from: Date; until: Date | null }): Promise<void> {
  await db('instrument_holdings').where({ id }).update({ from_at: h.from, until_at: h.until })
}

// ---- calibration records -----------------------------------------------------------------------------------------

/** The in-force arithmetic needs only dates: every record of the given instruments, without the documents. */
export async function spansOfInstruments(db: Knex, instrumentIds: readonly number[]): Promise<CalibrationSpan[]> {
  if (!instrumentIds.length) return []
  return (await db('calibration_records').whereIn('instrument_id', instrumentIds)
    .select('id', 'instrument_id', 'calibrated_on', 'due_at', 'superseded_from')).map(span)
}

/** Full records of the given instruments, oldest calibration first, with who entered and superseded them. */
export async function recordsOfInstruments(db: Knex, instrumentIds: readonly number[]): Promise<CalibrationRow[]> {
  if (!instrumentIds.length) return []
  const rows = await db('calibration_records as c')
    .leftJoin('users as cu', 'cu.id', 'c.created_by').leftJoin('users as su', 'su.id', 'c.superseded_by')
    .leftJoin('calibration_certificates as f', 'f.record_id', 'c.id').leftJoin('calibration_impacts as ci', 'ci.record_id', 'c.id')
    .whereIn('c.instrument_id', instrumentIds).orderBy('c.calibrated_on').orderBy('c.id')
    .select('c.*', 'cu.name as created_by_name', 'su.name as superseded_by_name', 'f.bytes as certificate_bytes', 'ci.id as impact_id')
  return rows.map((r: any) => ({
    ...span(r), certificateNumber: r.certificate_number ?? null, laboratory: r.laboratory ?? null, asFound: r.as_found ?? null,
    createdAt: r.created_at, createdBy: r.created_by_name ?? null, supersededReason: r.superseded_reason ?? null,
    supersededAt: r.superseded_at ?? null, supersededBy: r.superseded_by_name ?? null,
    certificateBytes: r.certificate_bytes == null ? null : Number(r.certificate_bytes), impactId: r.impact_id ?? null,
  }))
}

export async function insertRecord(db: Knex, r: {
  instrumentId: number; certificateNumber: string; laboratory: string; asFound: AsFound; calibratedOn: Date; dueAt: Date; createdBy: number | null
}): Promise<number> {
  const [id] = await db('calibration_records').insert({
    instrument_id: r.instrumentId, certificate_number: r.certificateNumber, laboratory: r.laboratory, as_found: r.asFound,
    calibrated_on: r.calibratedOn, due_at: r.dueAt, created_by: r.createdBy,
  })
  return id!
}

/** Locks one record for the rest of the transaction. */
export async function lockRecord(trx: Knex.Transaction, id: number): Promise<(CalibrationSpan & { supersededReason: string | null; certificateNumber: string | null }) | undefined> {
  const r = await trx('calibration_records').where({ id }).forUpdate().first()
  return r ? { ...span(r), supersededReason: r.superseded_reason ?? null, certificateNumber: r.certificate_number ?? null } : undefined
}

export async function markSuperseded(db: Knex, id: number, s: { from: Date; reason: string; at: Date; by: number | null }): Promise<void> {
  await db('calibration_records').where({ id }).update({ superseded_from: s.from, superseded_reason: s.reason, superseded_at: s.at, superseded_by: s.by })
}

// ---- certificate documents ---------------------------------------------------------------------------------------

export async function insertCertificate(db: Knex, c: { recordId: number; pdf: Buffer; sha256: string; fileName: string | null }): Promise<void> {
  await db('calibration_certificates').insert({ record_id: c.recordId, pdf: c.pdf, bytes: c.pdf.length, sha256: c.sha256, file_name: c.fileName })
}

export async function findCertificate(db: Knex, recordId: number): Promise<{ pdf: Buffer; fileName: string | null; certificateNumber: string | null } | undefined> {
  const r = await db('calibration_certificates as f').join('calibration_records as c', 'c.id', 'f.record_id')
    .where('f.record_id', recordId).first('f.pdf', 'f.file_name', 'c.certificate_number')
  return r ? { pdf: Buffer.from(r.pdf), fileName: r.file_name ?? null, certificateNumber: r.certificate_number ?? null } : undefined
}

/** A station's id and name, or undefined when there is no such station. */
export async function stationRef(db: Knex, id: number): Promise<{ id: number; name: string } | undefined> {
  const r = await db('stations').where({ id }).first('id', 'name')
  return r ? { id: r.id, name: r.name } : undefined
}

export async function stationNames(db: Knex, ids: readonly number[]): Promise<Map<number, string>> {
  if (!ids.length) return new Map()
  return new Map((await db('stations').whereIn('id', ids).select('id', 'name')).map((r: any) => [r.id, r.name]))
}

/** The record's instrument, read without a lock (the caller locks the instrument first, then the record). */
export async function instrumentOfRecord(db: Knex, recordId: number): Promise<number | undefined> {
  const r = await db('calibration_records').where({ id: recordId }).first('instrument_id')
  return r?.instrument_id
}

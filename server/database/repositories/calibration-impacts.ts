// SQL of calibration impact reviews: the reviews, the units measured inside a review's window, the decisions per
// unit and the notices sent to customers.
import type { Knex } from 'knex'
import type { ImpactDecision, ImpactRecord } from '../../../shared/utils/calibration-impact'
import { inSlices } from './shipment-units'

export type ImpactRow = {
  id: number; recordId: number; instrumentId: number; from: Date; to: Date; basis: 'in_tolerance' | 'earliest'; basisRecordId: number | null
  status: 'open' | 'closed'; runs: number; units: number; lots: number; certificates: number
  openedAt: Date; closedAt: Date | null; closedBy: string | null
}
export type WindowRef = { instrumentId: number; from: Date; to: Date }
export type WindowUnit = { unitId: number; partNumber: string; serial: string; lot: string; productId: number }
export type DecisionRow = { unitId: number; decision: ImpactDecision; reason: string | null; decidedBy: string; decidedAt: Date }
export type CertificateRow = {
  unitId: number; number: string; status: 'valid' | 'superseded' | 'revoked'
  customer: { id: number; code: string; name: string }; shipment: { id: number; code: string }
}

const impact = (r: any): ImpactRow => ({
  id: r.id, recordId: r.record_id, instrumentId: r.instrument_id, from: r.window_from, to: r.window_to, basis: r.window_basis,
  basisRecordId: r.basis_record_id ?? null, status: r.status, runs: r.runs, units: r.units, lots: r.lots, certificates: r.certificates,
  openedAt: r.opened_at, closedAt: r.closed_at ?? null, closedBy: r.closed_by_name ?? null,
})

// ---- records and reviews -----------------------------------------------------------------------------------------

/** What the window arithmetic reads of an instrument's records. */
export async function impactRecordsOf(db: Knex, instrumentId: number): Promise<ImpactRecord[]> {
  const rows = await db('calibration_records').where({ instrument_id: instrumentId }).select('id', 'calibrated_on', 'as_found', 'superseded_from')
  return rows.map((r: any) => ({ id: r.id, calibratedOn: r.calibrated_on, asFound: r.as_found ?? null, supersededFrom: r.superseded_from ?? null }))
}

/** Out-of-tolerance records that have no review yet (entered before reviews existed). */
export async function recordsWithoutReview(db: Knex): Promise<{ id: number; instrumentId: number }[]> {
  const rows = await db('calibration_records as c').leftJoin('calibration_impacts as i', 'i.record_id', 'c.id')
    .where('c.as_found', 'out_of_tolerance').whereNull('i.id').orderBy('c.id').select('c.id', 'c.instrument_id')
  return rows.map((r: any) => ({ id: r.id, instrumentId: r.instrument_id }))
}

/** Inserts the review unless the record has one already (two first views at once); answers the new id or null. */
export async function insertImpact(trx: Knex, r: { recordId: number; instrumentId: number; from: Date; to: Date; basis: 'in_tolerance' | 'earliest'; basisRecordId: number; openedBy: number | null; at: Date }): Promise<number | null> {
  const [res] = await trx.raw(
    'INSERT IGNORE INTO calibration_impacts (record_id, instrument_id, window_from, window_to, window_basis, basis_record_id, opened_by, opened_at) VALUES (?, ?, ?, ?, ?, ?, ?, ?)',
    [r.recordId, r.instrumentId, r.from, r.to, r.basis, r.basisRecordId, r.openedBy, r.at],
  )
  return res.affectedRows ? Number(res.insertId) : null
}

export async function setImpactCounts(trx: Knex, id: number, c: { runs: number; units: number; lots: number; certificates: number }): Promise<void> {
  await trx('calibration_impacts').where({ id }).update(c)
}

export async function findImpact(db: Knex, id: number): Promise<ImpactRow | undefined> {
  const r = await db('calibration_impacts as i').leftJoin('users as u', 'u.id', 'i.closed_by').where('i.id', id).first('i.*', 'u.name as closed_by_name')
  return r ? impact(r) : undefined
}

/** The review locked for the rest of the transaction: decisions, notices and closing of one review take turns. */
export async function lockImpact(trx: Knex, id: number): Promise<ImpactRow | undefined> {
  const r = await trx('calibration_impacts').where({ id }).forUpdate().first()
  return r ? impact(r) : undefined
}

export async function closeImpactRow(trx: Knex, id: number, by: number | null, at: Date): Promise<void> {
  await trx('calibration_impacts').where({ id }).update({ status: 'closed', closed_at: at, closed_by: by })
}

/** Every review with its record, instrument and how many units are decided; open ones first, newest first. */
export async function listImpactRows(db: Knex) {
  const rows = await db('calibration_impacts as i')
    .join('calibration_records as c', 'c.id', 'i.record_id').join('instruments as n', 'n.id', 'i.instrument_id')
    .select('i.*', 'c.certificate_number', 'c.calibrated_on', 'n.asset_number', 'n.kind', 'n.model',
      db.raw('(SELECT COUNT(*) FROM calibration_impact_decisions d WHERE d.impact_id = i.id) AS decided'))
    .orderByRaw("i.status = 'open' DESC").orderBy('i.opened_at', 'desc').orderBy('i.id', 'desc')
  return rows.map((r: any) => ({
    ...impact(r), decided: Number(r.decided),
    record: { id: r.record_id, certificateNumber: r.certificate_number ?? null, calibratedOn: r.calibrated_on as Date },
    instrument: { id: r.instrument_id, assetNumber: r.asset_number, kind: r.kind, model: r.model },
  }))
}

export async function recordAndInstrument(db: Knex, recordId: number) {
  const r = await db('calibration_records as c').join('instruments as n', 'n.id', 'c.instrument_id').where('c.id', recordId)
    .first('c.id', 'c.certificate_number', 'c.laboratory', 'c.calibrated_on', 'c.due_at', 'n.id as instrument_id', 'n.asset_number', 'n.kind', 'n.model', 'n.serial')
  return {
    record: { id: r.id as number, certificateNumber: (r.certificate_number ?? null) as string | null, laboratory: (r.laboratory ?? null) as string | null, calibratedOn: r.calibrated_on as Date, dueAt: r.due_at as Date },
    instrument: { id: r.instrument_id as number, assetNumber: r.asset_number as string, kind: r.kind as string, model: r.model as string, serial: r.serial as string },
  }
}

export async function certificateNumberOfRecord(db: Knex, recordId: number | null): Promise<string | null> {
  if (recordId === null) return null
  return (await db('calibration_records').where({ id: recordId }).first('certificate_number'))?.certificate_number ?? null
}

// ---- what the window holds ---------------------------------------------------------------------------------------

/** Runs linked to the instrument that started in [from, to), one row per unit. */
function windowRuns(db: Knex, w: WindowRef) {
  return db('run_instruments as ri').join('test_runs as r', 'r.id', 'ri.run_id')
    .where('ri.instrument_id', w.instrumentId).where('r.started_at', '>=', w.from).where('r.started_at', '<', w.to)
    .groupBy('r.unit_id')
    .select('r.unit_id', db.raw('COUNT(*) AS runs'), db.raw('MIN(r.started_at) AS first_at'), db.raw('MAX(r.started_at) AS last_at'))
}

/** How many runs, units, lots and valid certificates the window holds. */
export async function countWindow(db: Knex, w: WindowRef): Promise<{ runs: number; units: number; lots: number; certificates: number }> {
  const [r, c] = await Promise.all([
    db.from(windowRuns(db, w).as('w')).join('units as u', 'u.id', 'w.unit_id')
      .first(db.raw('COALESCE(SUM(w.runs), 0) AS runs'), db.raw('COUNT(*) AS units'), db.raw('COUNT(DISTINCT u.lot_id) AS lots')),
    db.from(windowRuns(db, w).as('w')).join('certificates as c', 'c.unit_id', 'w.unit_id').where('c.status', 'valid').first(db.raw('COUNT(*) AS n')),
  ])
  return { runs: Number((r as any).runs), units: Number((r as any).units), lots: Number((r as any).lots), certificates: Number((c as any).n) }
}

/** The window's lots with their units, runs and decided units. */
export async function lotsOfWindow(db: Knex, w: WindowRef, impactId: number) {
  const rows = await db.from(windowRuns(db, w).as('w')).join('units as u', 'u.id', 'w.unit_id').join('lots as l', 'l.id', 'u.lot_id')
    .join('products as p', 'p.id', 'u.product_id')
    .leftJoin('calibration_impact_decisions as d', function () { this.on('d.unit_id', 'w.unit_id').andOn('d.impact_id', db.raw('?', [impactId])) })
    .groupBy('l.id', 'l.code', 'p.part_number').orderBy('l.code')
    .select('l.code', 'p.part_number', db.raw('COUNT(*) AS units'), db.raw('SUM(w.runs) AS runs'), db.raw('COUNT(d.unit_id) AS decided'))
  return rows.map((r: any) => ({ code: r.code as string, partNumber: r.part_number as string, units: Number(r.units), runs: Number(r.runs), decided: Number(r.decided) }))
}

/** One page of the window's units (by lot, then serial), with their runs in the window. */
export async function unitsOfWindowPage(db: Knex, w: WindowRef, o: { lot?: string; limit: number; offset: number }) {
  const base = () => {
    const q = db.from(windowRuns(db, w).as('w')).join('units as u', 'u.id', 'w.unit_id').join('lots as l', 'l.id', 'u.lot_id').join('products as p', 'p.id', 'u.product_id')
    if (o.lot) q.where('l.code', o.lot)
    return q
  }
  const [total, rows] = await Promise.all([
    base().first(db.raw('COUNT(*) AS n')),
    base().orderBy('l.code').orderBy('u.serial').limit(o.limit).offset(o.offset)
      .select('u.id', 'u.serial', 'u.product_id', 'l.code as lot', 'p.part_number', 'w.runs', 'w.first_at', 'w.last_at'),
  ])
  return {
    total: Number((total as any).n),
    rows: rows.map((r: any) => ({
      unitId: r.id as number, productId: r.product_id as number, serial: r.serial as string, lot: r.lot as string, partNumber: r.part_number as string,
      runs: Number(r.runs), firstAt: r.first_at as Date, lastAt: r.last_at as Date,
    })),
  }
}

/** Every unit of the window (ids and names only), for decisions and notices. */
export async function unitsOfWindow(db: Knex, w: WindowRef): Promise<WindowUnit[]> {
  const rows = await db.from(windowRuns(db, w).as('w')).join('units as u', 'u.id', 'w.unit_id').join('lots as l', 'l.id', 'u.lot_id').join('products as p', 'p.id', 'u.product_id')
    .orderBy('l.code').orderBy('u.serial').select('u.id', 'u.serial', 'u.product_id', 'l.code as lot', 'p.part_number')
  return rows.map((r: any) => ({ unitId: r.id, serial: r.serial, lot: r.lot, partNumber: r.part_number, productId: r.product_id }))
}

/** Every certificate of the units, any status, with its customer and shipment; newest first per unit. */
export async function certificatesOfUnits(db: Knex, unitIds: readonly number[]): Promise<CertificateRow[]> {
  const rows = await inSlices(unitIds, (ids) => db('certificates as c').join('customers as cu', 'cu.id', 'c.customer_id').join('shipments as s', 's.id', 'c.shipment_id')
    .whereIn('c.unit_id', ids).orderBy('c.unit_id').orderBy('c.issued_at', 'desc').orderBy('c.id', 'desc')
    .select('c.unit_id', 'c.number', 'c.status', 'cu.id as customer_id', 'cu.code as customer_code', 'cu.name as customer_name', 's.id as shipment_id', 's.code as shipment_code'))
  return (rows as any[]).map((r) => ({
    unitId: r.unit_id, number: r.number, status: r.status,
    customer: { id: r.customer_id, code: r.customer_code, name: r.customer_name }, shipment: { id: r.shipment_id, code: r.shipment_code },
  }))
}

// ---- decisions ---------------------------------------------------------------------------------------------------

export async function decisionsOf(db: Knex, impactId: number, unitIds?: readonly number[]): Promise<Map<number, DecisionRow>> {
  const read = (ids?: readonly number[]) => {
    const q = db('calibration_impact_decisions as d').join('users as u', 'u.id', 'd.decided_by').where('d.impact_id', impactId)
      .select('d.unit_id', 'd.decision', 'd.reason', 'd.decided_at', 'u.name as decided_by')
    return ids ? q.whereIn('d.unit_id', ids) : q
  }
  const rows = unitIds ? await inSlices(unitIds, (ids) => read(ids)) : await read()
  return new Map((rows as any[]).map((r) => [r.unit_id, { unitId: r.unit_id, decision: r.decision, reason: r.reason ?? null, decidedBy: r.decided_by, decidedAt: r.decided_at }]))
}

export async function decisionTallies(db: Knex, impactId: number): Promise<Record<ImpactDecision, number>> {
  const rows = await db('calibration_impact_decisions').where({ impact_id: impactId }).groupBy('decision').select('decision', db.raw('COUNT(*) AS n'))
  const out: Record<ImpactDecision, number> = { no_impact: 0, retest: 0, recall: 0 }
  for (const r of rows as any[]) out[r.decision as ImpactDecision] = Number(r.n)
  return out
}

/** Writes the current decision of each unit (replacing an earlier one). */
export async function upsertDecisions(trx: Knex, impactId: number, rows: { unitId: number; decision: ImpactDecision; reason: string | null }[], by: number, at: Date): Promise<void> {
  for (let i = 0; i < rows.length; i += 500) {
    const slice = rows.slice(i, i + 500)
    await trx('calibration_impact_decisions')
      .insert(slice.map((r) => ({ impact_id: impactId, unit_id: r.unitId, decision: r.decision, reason: r.reason, decided_by: by, decided_at: at })))
      .onConflict(['impact_id', 'unit_id']).merge(['decision', 'reason', 'decided_by', 'decided_at'])
  }
}

// ---- notices -----------------------------------------------------------------------------------------------------

export async function insertNotice(trx: Knex, n: { impactId: number; customerId: number; mailId: number; sha256: string; units: number; by: number; at: Date }): Promise<number> {
  const [id] = await trx('calibration_impact_notices').insert({
    impact_id: n.impactId, customer_id: n.customerId, mail_id: n.mailId, content_sha256: n.sha256, units: n.units, sent_by: n.by, sent_at: n.at,
  })
  return Number(id)
}

/** The latest notice of each customer in the review: when, and the fingerprint of what it named. */
export async function latestNotices(db: Knex, impactId: number): Promise<Map<number, { sentAt: Date; sha256: string }>> {
  const rows = await db('calibration_impact_notices').where({ impact_id: impactId }).orderBy('sent_at').orderBy('id').select('customer_id', 'sent_at', 'content_sha256')
  return new Map((rows as any[]).map((r) => [r.customer_id, { sentAt: r.sent_at, sha256: r.content_sha256 }]))
}

export async function noticesOf(db: Knex, impactId: number) {
  const rows = await db('calibration_impact_notices as n').join('customers as c', 'c.id', 'n.customer_id').join('users as u', 'u.id', 'n.sent_by')
    .where('n.impact_id', impactId).orderBy('n.sent_at', 'desc').orderBy('n.id', 'desc')
    .select('n.id', 'c.name as customer', 'n.units', 'n.sent_at', 'u.name as sent_by', 'n.mail_id')
  return rows.map((r: any) => ({ id: r.id as number, customer: r.customer as string, units: r.units as number, sentAt: r.sent_at as Date, sentBy: r.sent_by as string, mailId: Number(r.mail_id) }))
}

/** How many contacts of each customer receive certificate notices. */
export async function noticeContactCounts(db: Knex, customerIds: readonly number[]): Promise<Map<number, number>> {
  if (!customerIds.length) return new Map()
  const rows = await db('customer_contacts').whereIn('customer_id', customerIds).where('receives_certificates', true).groupBy('customer_id').select('customer_id', db.raw('COUNT(*) AS n'))
  return new Map((rows as any[]).map((r) => [r.customer_id, Number(r.n)]))
}

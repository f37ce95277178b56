import type { Knex } from 'knex'

/** Lookups by id lists go in slices so a 10,000-unit shipment is a handful of statements, never one per unit. */
export const SLICE = 1000

export async function inSlices<T, R>(items: readonly T[], fn: (slice: T[]) => Promise<R[]>): Promise<R[]> {
  const out: R[] = []
  for (let i = 0; i < items.length; i += SLICE) out.push(...await fn(items.slice(i, i + SLICE)))
  return out
}

const iso = (d: Date | null | undefined) => (d ? new Date(d).toISOString() : null)
const steps = (v: unknown): string[] => (Array.isArray(v) ? v : JSON.parse(String(v)))

export type MemberUnit = {
  unitId: number; productId: number; partNumber: string; productName: string; steps: string[]; serial: string
  lotId: number; lot: string; lotStatus: string; addedAt: string; returnedAt: string | null
}

function member(db: Knex, shipmentId: number) {
  return db('shipment_units as su').join('units as u', 'u.id', 'su.unit_id').join('products as p', 'p.id', 'u.product_id').join('lots as l', 'l.id', 'u.lot_id')
    .where('su.shipment_id', shipmentId)
    .select('u.id as unit_id', 'u.product_id', 'p.part_number', 'p.name as product_name', 'p.steps', 'u.serial', 'l.id as lot_id', 'l.code as lot_code', 'l.status as lot_status', 'su.added_at', 'su.returned_at')
}

function toMember(r: any): MemberUnit {
  return {
    unitId: r.unit_id, productId: r.product_id, partNumber: r.part_number, productName: r.product_name, steps: steps(r.steps), serial: r.serial,
    lotId: r.lot_id, lot: r.lot_code, lotStatus: r.lot_status, addedAt: iso(r.added_at)!, returnedAt: iso(r.returned_at),
  }
}

/** Units of a shipment in part and serial order: those in it now first, then the returned ones. */
export async function shipmentUnitsPage(db: Knex, shipmentId: number, limit: number, offset: number): Promise<MemberUnit[]> {
  const rows = await member(db, shipmentId).orderByRaw('su.returned_at IS NOT NULL').orderBy('p.part_number').orderBy('u.serial').limit(limit).offset(offset)
  return rows.map(toMember)
}

/** The units in the shipment now (not returned). */
export async function liveShipmentUnits(db: Knex, shipmentId: number): Promise<MemberUnit[]> {
  return (await member(db, shipmentId).whereNull('su.returned_at').orderBy('p.part_number').orderBy('u.serial')).map(toMember)
}

export async function countShipmentUnits(db: Knex, shipmentId: number): Promise<{ live: number; returned: number }> {
  const [r] = await db('shipment_units').where({ shipment_id: shipmentId })
    .select(db.raw('COALESCE(SUM(returned_at IS NULL), 0) AS live'), db.raw('COALESCE(SUM(returned_at IS NOT NULL), 0) AS returned'))
  return { live: Number(r.live), returned: Number(r.returned) }
}

export type StepState = { unitId: number; step: string; attempts: number; latestVerdict: 'pass' | 'fail'; latestRunId: number; calibrationLapsed: boolean; finishedAt: string | null }

/** Each unit's latest result at every step it was tested at, with the latest run's calibration flag. */
export async function stepStatesOf(db: Knex, unitIds: readonly number[]): Promise<Map<number, StepState[]>> {
  const rows = await inSlices(unitIds, (ids) => db('unit_steps as us').join('test_runs as r', 'r.id', 'us.latest_run_id').whereIn('us.unit_id', ids)
    .select('us.unit_id', 'us.step', 'us.attempts', 'us.latest_verdict', 'us.latest_run_id', 'r.calibration_lapsed', 'r.finished_at'))
  const out = new Map<number, StepState[]>()
  for (const r of rows as any[]) {
    const list = out.get(r.unit_id) ?? []
    list.push({ unitId: r.unit_id, step: r.step, attempts: r.attempts, latestVerdict: r.latest_verdict, latestRunId: Number(r.latest_run_id), calibrationLapsed: !!r.calibration_lapsed, finishedAt: iso(r.finished_at) })
    out.set(r.unit_id, list)
  }
  return out
}

export type UnitCertificate = { id: number; unitId: number; number: string; status: 'valid' | 'superseded' | 'revoked'; issuedAt: string; rendered: boolean; retested: boolean }

/** The newest certificate of each unit in the given shipment. */
export async function certificatesInShipment(db: Knex, shipmentId: number, unitIds: readonly number[]): Promise<Map<number, UnitCertificate>> {
  const rows = await inSlices(unitIds, (ids) => db('certificates').where({ shipment_id: shipmentId }).whereIn('unit_id', ids)
    .orderBy('issued_at').orderBy('id').select('id', 'unit_id', 'number', 'status', 'issued_at', 'rendered_at', 'retest_run_id'))
  const out = new Map<number, UnitCertificate>()
  for (const r of rows as any[]) out.set(r.unit_id, { id: r.id, unitId: r.unit_id, number: r.number, status: r.status, issuedAt: iso(r.issued_at)!, rendered: !!r.rendered_at, retested: r.retest_run_id !== null })
  return out
}

/** Each unit's valid certificate, if any (a unit shipping again supersedes it). */
export async function validCertificatesOf(db: Knex, unitIds: readonly number[]): Promise<Map<number, number>> {
  const rows = await inSlices(unitIds, (ids) => db('certificates').where({ status: 'valid' }).whereIn('unit_id', ids).orderBy('issued_at').select('id', 'unit_id'))
  return new Map((rows as any[]).map((r) => [r.unit_id, r.id]))
}

export type SerialMatch = { unitId: number; productId: number; partNumber: string; serial: string; lot: string; liveShipmentId: number | null; liveShipmentCode: string | null }

/** Every unit with one of the given serials, of any part, with the shipment it is in now. */
export async function unitsBySerials(db: Knex, serials: readonly string[]): Promise<SerialMatch[]> {
  const rows = await inSlices([...new Set(serials)], (slice) => db('units as u').join('products as p', 'p.id', 'u.product_id').join('lots as l', 'l.id', 'u.lot_id')
    .leftJoin('shipment_units as su', 'su.live_unit_id', 'u.id').leftJoin('shipments as s', 's.id', 'su.shipment_id')
    .whereIn('u.serial', slice)
    .select('u.id', 'u.product_id', 'p.part_number', 'u.serial', 'l.code as lot_code', 's.id as shipment_id', 's.code as shipment_code'))
  return (rows as any[]).map((r) => ({ unitId: r.id, productId: r.product_id, partNumber: r.part_number, serial: r.serial, lot: r.lot_code, liveShipmentId: r.shipment_id ?? null, liveShipmentCode: r.shipment_code ?? null }))
}

/** Units of a lot, as serial matches (adding by lot). */
export async function unitsOfLot(db: Knex, lotCode: string): Promise<SerialMatch[] | undefined> {
  const lot = await db('lots').where({ code: lotCode }).first('id')
  if (!lot) return undefined
  const rows = await db('units as u').join('products as p', 'p.id', 'u.product_id').leftJoin('shipment_units as su', 'su.live_unit_id', 'u.id').leftJoin('shipments as s', 's.id', 'su.shipment_id')
    .where('u.lot_id', lot.id).orderBy('u.serial')
    .select('u.id', 'u.product_id', 'p.part_number', 'u.serial', 's.id as shipment_id', 's.code as shipment_code')
  return (rows as any[]).map((r) => ({ unitId: r.id, productId: r.product_id, partNumber: r.part_number, serial: r.serial, lot: lotCode, liveShipmentId: r.shipment_id ?? null, liveShipmentCode: r.shipment_code ?? null }))
}

export async function productSteps(db: Knex, productIds: readonly number[]): Promise<Map<number, string[]>> {
  if (!productIds.length) return new Map()
  const rows = await db('products').whereIn('id', [...new Set(productIds)]).select('id', 'steps')
  return new Map((rows as any[]).map((r) => [r.id, steps(r.steps)]))
}

export async function insertShipmentUnits(trx: Knex, shipmentId: number, unitIds: readonly number[], at: Date): Promise<void> {
  for (let i = 0; i < unitIds.length; i += SLICE) {
    await trx('shipment_units').insert(unitIds.slice(i, i + SLICE).map((u) => ({ shipment_id: shipmentId, unit_id: u, added_at: at })))
  }
}

/** Removes units not returned from a draft; answers how many went. */
export async function deleteShipmentUnits(trx: Knex, shipmentId: number, unitIds: readonly number[]): Promise<number> {
  let n = 0
  for (let i = 0; i < unitIds.length; i += SLICE) {
    n += await trx('shipment_units').where({ shipment_id: shipmentId }).whereNull('returned_at').whereIn('unit_id', unitIds.slice(i, i + SLICE)).delete()
  }
  return n
}

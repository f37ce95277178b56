import type { Knex } from 'knex'
import type { ShipmentHeader, ShipmentListItem, ShipmentStatus } from '../../../shared/types/shipment'

export type ShipmentFilter = {
  /** a customer user's own customer: only its released and dispatched shipments */
  customerId?: number
  statuses?: ShipmentStatus[]
  /** part of the code or the customer's PO */
  search?: string
  limit: number
  offset: number
}

export type ShipmentRow = ShipmentHeader & { productId: number | null; customerActive: boolean }

const iso = (d: Date | null | undefined) => (d ? new Date(d).toISOString() : null)

function header(db: Knex) {
  return db('shipments as s').join('customers as c', 'c.id', 's.customer_id')
    .leftJoin('products as p', 'p.id', 's.product_id')
    .leftJoin('users as cu', 'cu.id', 's.created_by').leftJoin('users as ru', 'ru.id', 's.released_by').leftJoin('users as du', 'du.id', 's.dispatched_by')
    .select('s.id', 's.code', 's.status', 's.customer_po', 's.notes', 's.created_at', 's.released_at', 's.dispatched_at', 's.carrier', 's.tracking_ref', 's.product_id',
      db.raw("DATE_FORMAT(s.planned_ship_date, '%Y-%m-%d') AS planned_ship_date"),
      'c.id as customer_id', 'c.code as customer_code', 'c.name as customer_name', 'c.active as customer_active', 'p.part_number',
      'cu.name as created_by_name', 'ru.name as released_by_name', 'du.name as dispatched_by_name',
      db.raw('(SELECT COUNT(*) FROM shipment_units su WHERE su.shipment_id = s.id AND su.returned_at IS NULL) AS unit_count'))
}

function toRow(r: any): ShipmentRow {
  return {
    id: r.id, code: r.code, status: r.status, customer: { id: r.customer_id, code: r.customer_code, name: r.customer_name },
    customerPo: r.customer_po ?? null, plannedShipDate: r.planned_ship_date ?? null, units: Number(r.unit_count),
    createdAt: iso(r.created_at)!, releasedAt: iso(r.released_at), dispatchedAt: iso(r.dispatched_at),
    carrier: r.carrier ?? null, trackingRef: r.tracking_ref ?? null, notes: r.notes ?? null,
    createdBy: r.created_by_name ?? null, releasedBy: r.released_by_name ?? null, dispatchedBy: r.dispatched_by_name ?? null,
    partNumber: r.part_number ?? null, productId: r.product_id ?? null, customerActive: !!r.customer_active,
  }
}

export function listItem(r: ShipmentRow): ShipmentListItem {
  const { id, code, status, customer, customerPo, plannedShipDate, units, createdAt, releasedAt, dispatchedAt, carrier, trackingRef } = r
  return { id, code, status, customer, customerPo, plannedShipDate, units, createdAt, releasedAt, dispatchedAt, carrier, trackingRef }
}

function filtered(db: Knex, f: Omit<ShipmentFilter, 'limit' | 'offset'>) {
  const q = db('shipments as s')
  if (f.customerId !== undefined) q.where('s.customer_id', f.customerId)
  if (f.statuses?.length) q.whereIn('s.status', f.statuses)
  if (f.search) {
    const like = `%${f.search.replace(/[\\%_]/g, (m) => '\\' + m)}%`
    q.where((w) => { w.where('s.code', 'like', like).orWhere('s.customer_po', 'like', like) })
  }
  return q
}

export async function listShipments(db: Knex, f: ShipmentFilter): Promise<{ total: number; rows: ShipmentRow[] }> {
  const [{ n }] = await filtered(db, f).count({ n: '*' }) as any
  const ids = filtered(db, f).select('s.id')
  const rows = await header(db).whereIn('s.id', ids).orderBy('s.created_at', 'desc').orderBy('s.id', 'desc').limit(f.limit).offset(f.offset)
  return { total: Number(n), rows: rows.map(toRow) }
}

export async function findShipment(db: Knex, id: number): Promise<ShipmentRow | undefined> {
  const r = await header(db).where('s.id', id).first()
  return r ? toRow(r) : undefined
}

/** Locks the shipment row for a change of state or of its units. */
export async function lockShipment(trx: Knex, id: number): Promise<{ id: number; code: string; status: ShipmentStatus; customerId: number; productId: number | null } | undefined> {
  const r = await trx('shipments').where({ id }).forUpdate().first('id', 'code', 'status', 'customer_id', 'product_id')
  return r ? { id: r.id, code: r.code, status: r.status, customerId: r.customer_id, productId: r.product_id ?? null } : undefined
}

export async function insertShipment(trx: Knex, s: { customerId: number; productId: number | null; customerPo: string | null; plannedShipDate: string | null; notes: string | null; createdBy: number; year: number }): Promise<{ id: number; code: string }> {
  // the code follows the id, which only the insert knows: a placeholder first, unique by construction
  const placeholder = `NEW-${process.pid}-${Date.now()}-${Math.random().toString(36).slice(2, 8)}`.slice(0, 32)
  const [id] = await trx('shipments').insert({
    code: placeholder, customer_id: s.customerId, product_id: s.productId, customer_po: s.customerPo,
    planned_ship_date: s.plannedShipDate, notes: s.notes, created_by: s.createdBy,
  })
  const code = `SHP-${s.year}-${String(id).padStart(5, '0')}`
  await trx('shipments').where({ id }).update({ code })
  return { id: id!, code }
}

export async function updateShipmentFields(trx: Knex, id: number, f: Partial<{ customerId: number; productId: number | null; customerPo: string | null; plannedShipDate: string | null; notes: string | null }>): Promise<void> {
  const row: Record<string, unknown> = {}
  if (f.customerId !== undefined) row.customer_id = f.customerId
  if (f.productId !== undefined) row.product_id = f.productId
  if (f.customerPo !== undefined) row.customer_po = f.customerPo
  if (f.plannedShipDate !== undefined) row.planned_ship_date = f.plannedShipDate
  if (f.notes !== undefined) row.notes = f.notes
  if (Object.keys(row).length) await trx('shipments').where({ id }).update(row)
}

export async function markReleased(trx: Knex, id: number, by: number, at: Date): Promise<void> {
  await trx('shipments').where({ id }).update({ status: 'released', released_at: at, released_by: by })
}

export async function markDispatched(trx: Knex, id: number, by: number, at: Date, carrier: string, trackingRef: string): Promise<void> {
  await trx('shipments').where({ id }).update({ status: 'dispatched', dispatched_at: at, dispatched_by: by, carrier, tracking_ref: trackingRef })
}

import type { Knex } from 'knex'
import type { ShipmentDetail, ShipmentList, ShipmentStatus } from '../../../shared/types/shipment'
import { findShipment, listItem, listShipments } from '../../database/repositories/shipments'
import { certificatesInShipment, countShipmentUnits, shipmentUnitsPage, stepStatesOf } from '../../database/repositories/shipment-units'
import { overallVerdict } from './unit-verdict'

/** Who is reading: staff see every shipment; a customer only its own, once released. */
export type Reader = { customerId: number | null }

export const SHIPMENT_STATUSES: ShipmentStatus[] = ['draft', 'released', 'dispatched']
const VISIBLE_TO_CUSTOMER: ShipmentStatus[] = ['released', 'dispatched']
export const MAX_UNITS_PAGE = 10_000

export type ShipmentListQuery = { page: number; pageSize: number; statuses: ShipmentStatus[]; search?: string; customerId?: number }
export type UnitsPage = { page: number; pageSize: number }

export async function shipmentList(db: Knex, reader: Reader, q: ShipmentListQuery): Promise<ShipmentList> {
  const { page, pageSize, search } = q
  let statuses = q.statuses
  let customerId = q.customerId
  if (reader.customerId !== null) {
    // the account decides the customer, never the query
    customerId = reader.customerId
    statuses = statuses.length ? statuses.filter((s) => VISIBLE_TO_CUSTOMER.includes(s)) : VISIBLE_TO_CUSTOMER
    if (!statuses.length) return { shipments: [], total: 0, page, pageSize }
  }
  const { total, rows } = await listShipments(db, { customerId, statuses, search, limit: pageSize, offset: (page - 1) * pageSize })
  return { shipments: rows.map(listItem), total, page, pageSize }
}

/** A customer asking for another customer's shipment, or a draft, learns nothing: 404 as for one that does not exist. */
export async function readableShipment(db: Knex, reader: Reader, id: number) {
  const s = await findShipment(db, id)
  if (!s) return undefined
  if (reader.customerId !== null && (s.customer.id !== reader.customerId || !VISIBLE_TO_CUSTOMER.includes(s.status))) return undefined
  return s
}

export async function shipmentDetail(db: Knex, reader: Reader, id: number, { page, pageSize }: UnitsPage = { page: 1, pageSize: MAX_UNITS_PAGE }): Promise<ShipmentDetail | undefined> {
  const s = await readableShipment(db, reader, id)
  if (!s) return undefined
  const [members, counts] = await Promise.all([shipmentUnitsPage(db, id, pageSize, (page - 1) * pageSize), countShipmentUnits(db, id)])
  const ids = members.map((m) => m.unitId)
  const [states, certs] = await Promise.all([stepStatesOf(db, ids), certificatesInShipment(db, id, ids)])
  const units = members.map((m) => {
    const st = states.get(m.unitId) ?? []
    const last = st.find((x) => x.step === m.steps.at(-1))
    const c = certs.get(m.unitId)
    return {
      partNumber: m.partNumber, productName: m.productName, serial: m.serial, lot: m.lot,
      latestVerdict: overallVerdict(m.steps, st), finalTestedAt: last?.finishedAt ?? null,
      calibrationLapsed: st.some((x) => x.calibrationLapsed), addedAt: m.addedAt, returnedAt: m.returnedAt,
      certificate: c ? { number: c.number, status: c.status, issuedAt: c.issuedAt, rendered: c.rendered, retested: c.retested } : null,
    }
  })
  const { productId: _p, customerActive: _a, ...header } = s
  const shipment = reader.customerId !== null ? { ...header, notes: null, createdBy: null, releasedBy: null, dispatchedBy: null } : header
  return { shipment, units, unitsTotal: counts.live + counts.returned, returnedTotal: counts.returned, page, pageSize }
}

import type { Knex } from 'knex'
import type { ShipmentDetail, ShipmentList, ShipmentStatus } from '../../../shared/types/shipment'
import { findShipment, listItem, listShipments } from '../../database/repositories/shipments'
import { certificatesInShipment, countShipmentUnits, shipmentUnitsPage, stepStatesOf } from '../../database/repositories/shipment-units'
import { RuleError } from '../rule-error'
import { overallVerdict } from './unit-verdict'

/** Who is reading: staff see every shipment; a customer only its own, once released. */
export type Reader = { customerId: number | null }

const STATUSES: ShipmentStatus[] = ['draft', 'released', 'dispatched']
const VISIBLE_TO_CUSTOMER: ShipmentStatus[] = ['released', 'dispatched']
export const MAX_UNITS_PAGE = 10_000

function one(v: unknown): string | undefined {
  const s = Array.isArray(v) ? v[0] : v
  return s == null || s === '' ? undefined : String(s)
}

function positive(raw: Record<string, unknown>, name: string, dflt: number, max: number): number {
  const s = one(raw[name])
  if (s === undefined) return dflt
  if (!/^\d{1,6}$/.test(s) || Number(s) < 1 || Number(s) > max) throw new RuleError(400, 'Some query parameters are not valid.', [{ pointer: `/query/${name}`, message: `must be a whole number from 1 to ${max}` }])
  return Number(s)
}

export async function shipmentList(db: Knex, reader: Reader, raw: Record<string, unknown>): Promise<ShipmentList> {
  const page = positive(raw, 'page', 1, 100_000)
  const pageSize = positive(raw, 'pageSize', 50, 200)
  let statuses = (one(raw.status)?.split(',').map((s) => s.trim()).filter(Boolean) ?? []) as ShipmentStatus[]
  const bad = statuses.find((s) => !STATUSES.includes(s))
  if (bad) throw new RuleError(400, 'Some query parameters are not valid.', [{ pointer: '/query/status', message: `must be among ${STATUSES.join(', ')}` }])
  const search = one(raw.q)?.slice(0, 64)
  const customerFilter = one(raw.customer)
  let customerId: number | undefined
  if (reader.customerId !== null) {
    // the account decides the customer, never the query
    customerId = reader.customerId
    statuses = statuses.length ? statuses.filter((s) => VISIBLE_TO_CUSTOMER.includes(s)) : VISIBLE_TO_CUSTOMER
    if (!statuses.length) return { shipments: [], total: 0, page, pageSize }
  } else if (customerFilter !== undefined) {
    if (!/^\d{1,10}$/.test(customerFilter)) throw new RuleError(400, 'Some query parameters are not valid.', [{ pointer: '/query/customer', message: 'must be a customer id' }])
    customerId = Number(customerFilter)
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

export async function shipmentDetail(db: Knex, reader: Reader, id: number, raw: Record<string, unknown> = {}): Promise<ShipmentDetail | undefined> {
  const s = await readableShipment(db, reader, id)
  if (!s) return undefined
  const page = positive(raw, 'page', 1, 100_000)
  const pageSize = positive(raw, 'pageSize', MAX_UNITS_PAGE, MAX_UNITS_PAGE)
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

import type { ShipmentStatus } from '../../shared/types/shipment'
import { MAX_UNITS_PAGE, SHIPMENT_STATUSES, type ShipmentListQuery, type UnitsPage } from '../services/shipments/views'
import { problem } from './problem'
import { firstValue as one, wholeNumberParam as positive } from './query-values'

/** ?page, pageSize, status (comma-separated), q, customer (id; read for staff only: a customer's account decides its own). */
export function parseShipmentListQuery(raw: Record<string, unknown>, staff: boolean): ShipmentListQuery {
  const page = positive(raw, 'page', 1, 100_000)
  const pageSize = positive(raw, 'pageSize', 50, 200)
  const statuses = (one(raw.status)?.split(',').map((s) => s.trim()).filter(Boolean) ?? []) as ShipmentStatus[]
  const bad = statuses.find((s) => !SHIPMENT_STATUSES.includes(s))
  if (bad) throw problem(400, 'Some query parameters are not valid.', { errors: [{ pointer: '/query/status', message: `must be among ${SHIPMENT_STATUSES.join(', ')}` }] })
  const search = one(raw.q)?.slice(0, 64)
  const customer = staff ? one(raw.customer) : undefined
  if (customer !== undefined && !/^\d{1,10}$/.test(customer)) throw problem(400, 'Some query parameters are not valid.', { errors: [{ pointer: '/query/customer', message: 'must be a customer id' }] })
  return { page, pageSize, statuses, search, customerId: customer === undefined ? undefined : Number(customer) }
}

/** ?page, pageSize of a shipment's units (all of them on one page unless asked). */
export function parseShipmentUnitsPage(raw: Record<string, unknown>): UnitsPage {
  return { page: positive(raw, 'page', 1, 100_000), pageSize: positive(raw, 'pageSize', MAX_UNITS_PAGE, MAX_UNITS_PAGE) }
}

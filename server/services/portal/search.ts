import type { Knex } from 'knex'
import { searchShippedUnits, type Scope } from '../../database/repositories/portal'
import type { PortalUnitSearch } from '../../../shared/types/portal'

/** Shipped serials starting with `q` (every shipped serial when empty), in the caller's scope, a page at a time. */
export async function searchPortalUnits(db: Knex, scope: Scope, { q, page, pageSize }: { q: string; page: number; pageSize: number }): Promise<PortalUnitSearch> {
  const { rows, total } = await searchShippedUnits(db, scope, q, pageSize, (page - 1) * pageSize)
  return {
    q, total, page, pageSize,
    units: rows.map((r) => ({
      partNumber: r.partNumber, productName: r.productName, serial: r.serial, lot: r.lot,
      shipment: { id: r.shipmentId, code: r.shipmentCode, customer: r.customer }, returned: r.returned,
    })),
  }
}

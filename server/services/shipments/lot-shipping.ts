import type { Knex } from 'knex'
import { lotUnitCounts } from '../../database/repositories/unit-standing'

export type LotShipping = { units: number; dispatchedUnits: number }

/**
 * Of a lot's units that passed every step (the lot's counters; each unit's `passed_all` is kept by the write path),
 * how many are in a dispatched shipment now: the join reads only the lot's shipped units. A caller that has read the
 * counters already passes their `passed_all`.
 */
export async function lotShipping(db: Knex, lotId: number, passedAll?: number): Promise<LotShipping> {
  const units = passedAll ?? (await lotUnitCounts(db, lotId)).passed_all
  if (!units) return { units: 0, dispatchedUnits: 0 }
  const [r] = await db('shipment_units as su').join('shipments as s', 's.id', 'su.shipment_id').join('units as u', 'u.id', 'su.unit_id')
    .where('u.lot_id', lotId).where('s.status', 'dispatched').whereNull('su.returned_at').where('u.passed_all', true).countDistinct({ n: 'su.unit_id' })
  return { units, dispatchedUnits: Number((r as any)?.n ?? 0) }
}

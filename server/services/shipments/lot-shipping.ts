import type { Knex } from 'knex'
import { stepStatesOf } from '../../database/repositories/shipment-units'
import { overallVerdict } from './unit-verdict'

export type LotShipping = { units: number; dispatchedUnits: number }

/** Of a lot's units that passed every step, how many are in a dispatched shipment now. */
export async function lotShipping(db: Knex, lotId: number, steps: readonly string[]): Promise<LotShipping> {
  const ids = (await db('units').where({ lot_id: lotId }).select('id')).map((r: any) => r.id as number)
  if (!ids.length) return { units: 0, dispatchedUnits: 0 }
  const states = await stepStatesOf(db, ids)
  const passed = ids.filter((id) => overallVerdict(steps, states.get(id) ?? []) === 'pass')
  const dispatched = new Set((await db('shipment_units as su').join('shipments as s', 's.id', 'su.shipment_id').join('units as u', 'u.id', 'su.unit_id')
    .where('u.lot_id', lotId).where('s.status', 'dispatched').whereNull('su.returned_at').select('su.unit_id')).map((r: any) => r.unit_id as number))
  return { units: passed.length, dispatchedUnits: passed.filter((id) => dispatched.has(id)).length }
}

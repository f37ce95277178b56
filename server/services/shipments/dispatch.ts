import type { Knex } from 'knex'
import { writeAudit } from '../../database/repositories/audit'
import { updateLotStatus } from '../../database/repositories/lot-detail'
import { lockShipment, markDispatched } from '../../database/repositories/shipments'
import { liveShipmentUnits } from '../../database/repositories/shipment-units'
import { RuleError } from '../rule-error'
import { lotShipping } from './lot-shipping'
import { writeTransaction } from '../../database/write-retries'

export type DispatchInput = { carrier: string; trackingRef: string }

/**
 * A released shipment leaves with its carrier and tracking reference. In the same transaction each released lot
 * of its units becomes shipped once every unit of the lot that passed is in a dispatched shipment.
 */
export async function dispatchShipment(db: Knex, actorId: number, shipmentId: number, input: DispatchInput, now = new Date()) {
  const result = await writeTransaction(db, async (trx) => {
    const s = await lockShipment(trx, shipmentId)
    if (!s) throw new RuleError(404, 'No such shipment.')
    if (s.status !== 'released') throw new RuleError(409, s.status === 'draft' ? `Shipment ${s.code} must be released before it is dispatched.` : `Shipment ${s.code} is already dispatched.`)
    const units = await liveShipmentUnits(trx, shipmentId)
    const lotIds = [...new Set(units.map((u) => u.lotId))]
    const lots = await trx('lots').whereIn('id', lotIds).forUpdate().select('id', 'code', 'status', 'product_id')
    const held = lots.filter((l: any) => l.status === 'on_hold').map((l: any) => l.code)
    if (held.length) throw new RuleError(409, `Lots on hold cannot ship: ${held.join(', ')}.`, [], { heldLots: held })
    const carrier = input.carrier.trim()
    const trackingRef = input.trackingRef.trim()
    await writeAudit(trx, { userId: actorId, action: 'dispatch', entity: 'shipment', entityId: s.code, before: { status: 'released' }, after: { status: 'dispatched', carrier, trackingRef } })
    await markDispatched(trx, shipmentId, actorId, now, carrier, trackingRef)
    const shipped: string[] = []
    for (const l of lots as any[]) {
      if (l.status !== 'released') continue
      const state = await lotShipping(trx, l.id)
      if (state.units === 0 || state.dispatchedUnits < state.units) continue
      await writeAudit(trx, { userId: actorId, action: 'ship', entity: 'lot', entityId: l.code, before: { status: 'released' }, after: { status: 'shipped', byShipment: s.code, dispatchedUnits: state.dispatchedUnits } })
      await updateLotStatus(trx, l.id, { status: 'shipped', shippedAt: now })
      shipped.push(l.code)
    }
    return { code: s.code, status: 'dispatched' as const, lotsShipped: shipped }
  })
  return result
}

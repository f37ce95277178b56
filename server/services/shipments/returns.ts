import type { Knex } from 'knex'
import { writeAudit } from '../../database/repositories/audit'
import { lockShipment } from '../../database/repositories/shipments'
import { RuleError } from '../rule-error'
import { writeTransaction } from '../../database/write-retries'

export type ReturnInput = { partNumber: string; serial: string; returnNumber: string; reason: string; receivedAt: string }

/**
 * A unit comes back from the customer: it leaves the shipment (so it may be tested again and join another), the
 * return is recorded, and its certificate stays as issued until shipping again supersedes it.
 */
export async function recordReturn(db: Knex, actorId: number, shipmentId: number, input: ReturnInput) {
  return writeTransaction(db, async (trx) => {
    const s = await lockShipment(trx, shipmentId)
    if (!s) throw new RuleError(404, 'No such shipment.')
    if (s.status === 'draft') throw new RuleError(409, `Shipment ${s.code} is a draft: take the unit out instead.`)
    const unit = await trx('shipment_units as su').join('units as u', 'u.id', 'su.unit_id').join('products as p', 'p.id', 'u.product_id')
      .where({ 'su.shipment_id': shipmentId, 'p.part_number': input.partNumber, 'u.serial': input.serial }).whereNull('su.returned_at').forUpdate().first('u.id')
    if (!unit) throw new RuleError(422, `${input.partNumber} ${input.serial} is not in shipment ${s.code}, or has already been returned.`, [{ pointer: '/serial', message: 'not in this shipment' }])
    const receivedAt = new Date(input.receivedAt)
    const returnedAt = new Date()
    await writeAudit(trx, { userId: actorId, action: 'return', entity: 'shipment', entityId: s.code, after: { partNumber: input.partNumber, serial: input.serial, returnNumber: input.returnNumber.trim(), reason: input.reason.trim(), receivedAt } })
    await trx('shipment_units').where({ shipment_id: shipmentId, unit_id: unit.id }).whereNull('returned_at').update({ returned_at: returnedAt })
    await trx('unit_returns').insert({ unit_id: unit.id, shipment_id: shipmentId, return_number: input.returnNumber.trim(), reason: input.reason.trim(), received_at: receivedAt, received_by: actorId })
    return { code: s.code, partNumber: input.partNumber, serial: input.serial, returnedAt: returnedAt.toISOString() }
  })
}

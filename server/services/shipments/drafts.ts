import type { Knex } from 'knex'
import { writeAudit } from '../../database/repositories/audit'
import { findCustomer } from '../../database/repositories/customers'
import { findProductByPartNumber } from '../../database/repositories/products'
import { insertShipment, lockShipment, updateShipmentFields } from '../../database/repositories/shipments'
import { RuleError } from '../rule-error'
import { writeTransaction } from '../../database/write-retries'

export type ShipmentFields = { customerId: number; partNumber?: string | null; customerPo?: string | null; plannedShipDate?: string | null; notes?: string | null }

const text = (s: string | null | undefined) => (s == null ? s : s.trim() || null)

async function activeCustomer(trx: Knex, id: number) {
  const c = await findCustomer(trx, id)
  if (!c) throw new RuleError(422, 'No such customer.', [{ pointer: '/customerId', message: 'no such customer' }])
  if (!c.active) throw new RuleError(422, `${c.name} is deactivated: it takes no new shipments.`, [{ pointer: '/customerId', message: 'customer is deactivated' }])
}

async function productId(trx: Knex, partNumber: string | null | undefined): Promise<number | null | undefined> {
  if (partNumber === undefined) return undefined
  if (partNumber === null) return null
  const p = await findProductByPartNumber(trx, partNumber.trim())
  if (!p) throw new RuleError(422, `No part ${partNumber}.`, [{ pointer: '/partNumber', message: 'no such part' }])
  return p.id
}

export async function createShipment(db: Knex, actorId: number, f: ShipmentFields, now = new Date()): Promise<{ id: number; code: string }> {
  return writeTransaction(db, async (trx) => {
    await activeCustomer(trx, f.customerId)
    const fields = { customerId: f.customerId, productId: (await productId(trx, f.partNumber)) ?? null, customerPo: text(f.customerPo) ?? null, plannedShipDate: f.plannedShipDate ?? null, notes: text(f.notes) ?? null }
    const created = await insertShipment(trx, { ...fields, createdBy: actorId, year: now.getUTCFullYear() })
    await writeAudit(trx, { userId: actorId, action: 'create', entity: 'shipment', entityId: created.code, after: { ...fields, partNumber: f.partNumber ?? null } })
    return created
  })
}

/** Header changes while the shipment is a draft; restricting it to a part is refused while it holds units of another. */
export async function changeShipment(db: Knex, actorId: number, id: number, f: Partial<ShipmentFields>): Promise<void> {
  await writeTransaction(db, async (trx) => {
    const s = await lockShipment(trx, id)
    if (!s) throw new RuleError(404, 'No such shipment.')
    if (s.status !== 'draft') throw new RuleError(409, `Shipment ${s.code} is ${s.status}: only a draft can change.`)
    if (f.customerId !== undefined && f.customerId !== s.customerId) await activeCustomer(trx, f.customerId)
    const pid = await productId(trx, f.partNumber)
    if (pid) {
      const other = await trx('shipment_units as su').join('units as u', 'u.id', 'su.unit_id').where('su.shipment_id', id).whereNull('su.returned_at').whereNot('u.product_id', pid).first('u.serial')
      if (other) throw new RuleError(409, `The shipment holds units of other parts (${other.serial}); remove them before restricting it to ${f.partNumber}.`, [{ pointer: '/partNumber', message: 'units of other parts present' }])
    }
    const change = { customerId: f.customerId, productId: pid, customerPo: text(f.customerPo), plannedShipDate: f.plannedShipDate, notes: text(f.notes) }
    await writeAudit(trx, { userId: actorId, action: 'update', entity: 'shipment', entityId: s.code, before: { customerId: s.customerId, productId: s.productId }, after: { ...change, partNumber: f.partNumber } })
    await updateShipmentFields(trx, id, change)
  })
}

import type { Knex } from 'knex'
import { contactsOf } from '../../database/repositories/customers'
import { makerIdentity } from '../certificates/maker'
import { enqueueMail } from './outbox'
import { shipmentReleased } from './templates'

/**
 * Queues the release notice to the customer's contacts who receive certificate notices, in the release's
 * transaction; a customer without such contacts gets none. Returns the outbox id, or null.
 */
export async function queueShipmentReleased(trx: Knex, s: { id: number; code: string; customerId: number; customerName: string; units: number }): Promise<number | null> {
  const to = (await contactsOf(trx, s.customerId)).filter((c) => c.receivesCertificates && c.email).map((c) => c.email)
  if (!to.length) return null
  const po = (await trx('shipments').where({ id: s.id }).first('customer_po'))?.customer_po ?? null
  const m = shipmentReleased({ shipmentId: s.id, code: s.code, customerName: s.customerName, po, units: s.units, makerName: makerIdentity().name })
  return enqueueMail(trx, { to, template: 'shipmentReleased', ...m })
}

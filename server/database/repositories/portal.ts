import type { Knex } from 'knex'

/** Shipments of one customer with their units and each unit's final-step result. */
export async function customerShipments(db: Knex, customerId: number) {
  const shipments = await db('shipments').where({ customer_id: customerId }).whereIn('status', ['released', 'dispatched'])
    .orderBy('created_at', 'desc').select('id', 'code', 'status', 'customer_po', 'released_at', 'dispatched_at')
  if (!shipments.length) return []
  const units = await db('shipment_units as su').join('units as u', 'u.id', 'su.unit_id').join('products as p', 'p.id', 'u.product_id')
    .join('lots as l', 'l.id', 'u.lot_id')
    .leftJoin('unit_steps as us', function () { this.on('us.unit_id', '=', 'u.id').andOn('us.step', '=', db.raw('?', ['final'])) })
    .leftJoin('test_runs as r', 'r.id', 'us.latest_run_id')
    .whereIn('su.shipment_id', shipments.map((s: any) => s.id))
    .orderBy('u.serial')
    .select('su.shipment_id', 'u.serial', 'p.part_number', 'p.name as product_name', 'l.code as lot_code', 'us.latest_verdict', 'us.attempts', 'r.finished_at', 'r.calibration_lapsed')
  return shipments.map((s: any) => ({
    code: s.code, status: s.status, customerPo: s.customer_po, releasedAt: s.released_at, shippedAt: s.dispatched_at,
    units: units.filter((u: any) => u.shipment_id === s.id).map((u: any) => ({
      serial: u.serial, partNumber: u.part_number, productName: u.product_name, lot: u.lot_code,
      finalVerdict: u.latest_verdict ?? null, finalTestedAt: u.finished_at ?? null, calibrationLapsed: !!u.calibration_lapsed,
    })),
  }))
}

import type { Knex } from 'knex'
import type { CertificateNotice } from '../../../shared/types/certificate-notice'

/**
 * Valid certificates with a passing retest waiting for reissue, and certificates a failing retest revoked (changed
 * by no user) since `since`, newest first.
 */
export async function certificateNotices(db: Knex, since: Date, limit = 200): Promise<CertificateNotice[]> {
  const rows = await db('certificates as c')
    .join('units as u', 'u.id', 'c.unit_id').join('products as p', 'p.id', 'u.product_id')
    .join('shipments as s', 's.id', 'c.shipment_id').join('customers as cu', 'cu.id', 'c.customer_id')
    .leftJoin('test_runs as r', 'r.id', 'c.retest_run_id').leftJoin('stations as st', 'st.id', 'r.station_id')
    .whereNotNull('c.retest_run_id')
    .where((q) => q.where('c.status', 'valid').orWhere((r) => r.where('c.status', 'revoked').whereNull('c.status_changed_by').where('c.status_changed_at', '>=', since)))
    .orderBy([{ column: 'r.started_at', order: 'desc' }, { column: 'c.id', order: 'desc' }]).limit(limit)
    .select('c.number', 'c.status', 'c.status_changed_at', 'p.part_number', 'u.serial', 's.id as shipment_id', 's.code as shipment_code', 'cu.name as customer',
      'r.step', 'r.started_at', 'st.name as station')
  return rows.map((r: any) => ({
    number: r.number, partNumber: r.part_number, serial: r.serial, shipmentId: Number(r.shipment_id), shipmentCode: r.shipment_code, customer: r.customer,
    kind: r.status === 'valid' ? 'reissue' : 'revoked', step: r.step ?? null,
    retestStartedAt: r.started_at ? new Date(r.started_at).toISOString() : null, station: r.station ?? null,
    changedAt: r.status_changed_at ? new Date(r.status_changed_at).toISOString() : null,
  }))
}

// Units of the demo tripler tested through every step (final with a phase-noise sweep and the reference's noise) on
// a demo station, put on a shipment of a demo customer, and optionally certified through the issuing service.
import type { Knex } from 'knex'
import { expect } from 'vitest'
import { DEMO_PRODUCTS } from '../../fixtures/demo-catalogue'
import { generateRun, mulberry32 } from '../../fixtures/run-generator'
import { ingestBatch } from '../../server/services/ingest/ingest-batch'
import { issueCertificates, type IssuedCertificate } from '../../server/services/certificates/issue'

export const TRIPLER = DEMO_PRODUCTS.find((p) => p.partNumber === 'VFW-T3-375')!

export type CertifiedSet = {
  shipmentId: number; customerId: number; qualityId: number
  units: { unitId: number; serial: string; finalRunUuid: string }[]
  issued: IssuedCertificate[]
}

/** `hold` keeps the certificates from any renderer (a lease of owner HOLD for an hour), taken in the issuing transaction. */
export const HOLD = 'test-hold'

export async function testedShipment(db: Knex, o: { tag: string; count: number; customer?: 'QUILL' | 'SALT'; issue?: boolean; hold?: boolean; start?: Date }): Promise<CertifiedSet> {
  const station = await db('stations').where({ name: 'ATE-T3-01' }).first('id', 'name')
  const start = (o.start ?? new Date(Date.now() - 6 * 3_600_000)).getTime()
  const rand = mulberry32(o.tag.length * 7919 + o.count)
  const runs = []
  const finals = new Map<string, string>()
  for (let i = 0; i < o.count; i++) {
    const serial = `${o.tag}-${String(i).padStart(4, '0')}`
    for (const [k, step] of TRIPLER.steps.entries()) {
      const run = generateRun({ product: TRIPLER, lot: `${o.tag}-L`, serial, step, startedAt: new Date(start + k * 600_000 + i * 1000), rand, failRate: 0, withTrace: true })
      if (step === 'final') finals.set(serial, run.id)
      runs.push(run)
    }
  }
  for (let i = 0; i < runs.length; i += 300) {
    const results = await ingestBatch(db, station, runs.slice(i, i + 300))
    expect(results.filter((r) => r.status !== 201)).toEqual([])
  }
  const customer = await db('customers').where({ code: o.customer ?? 'QUILL' }).first('id')
  const quality = await db('users').where({ role: 'quality' }).first('id')
  const [shipmentId] = await db('shipments').insert({ code: `SH-${o.tag}`.slice(0, 32), customer_id: customer.id, status: 'released', customer_po: `PO-${o.tag}`.slice(0, 64) })
  const unitRows = await db('units as u').join('lots as l', 'l.id', 'u.lot_id').where('l.code', `${o.tag}-L`).orderBy('u.serial').select('u.id', 'u.serial')
  await db('shipment_units').insert(unitRows.map((u: any) => ({ shipment_id: shipmentId, unit_id: u.id })))
  const units = unitRows.map((u: any) => ({ unitId: u.id, serial: u.serial, finalRunUuid: finals.get(u.serial)! }))
  const issued = o.issue === false ? [] : await db.transaction(async (trx) => {
    const out = await issueCertificates(trx, { shipmentId: shipmentId!, issuedBy: quality.id, now: new Date(), units: units.map((u) => ({ unitId: u.unitId })) })
    if (o.hold) {
      await trx('certificates').whereIn('id', out.map((c) => c.certificateId))
        .update({ render_lease_owner: HOLD, render_lease_until: new Date(Date.now() + 3_600_000) })
    }
    return out
  })
  return { shipmentId: shipmentId!, customerId: customer.id, qualityId: quality.id, units, issued }
}

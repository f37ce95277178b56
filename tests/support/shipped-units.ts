// Tested units of a demo product (the tripler unless told) in a fresh lot, put on a released shipment of a demo customer, with certificate
// rows and stand-in documents, written straight into the test database.
import { randomBytes } from 'node:crypto'
import type { Knex } from 'knex'
import { expect } from 'vitest'
import { DEMO_PRODUCTS } from '../../fixtures/demo-catalogue'
import { generateRun, mulberry32 } from '../../fixtures/run-generator'
import { ingestBatch } from '../../server/services/ingest/ingest-batch'


export type ShippedSet = { shipmentId: number; code: string; lot: string; serials: string[]; certificates: { number: string; verifyCode: string; serial: string }[] }

/** A small PDF stand-in: what the archive must carry byte for byte. */
export function standInPdf(label: string): Buffer {
  return Buffer.from(`%PDF-1.4\n% ${label}\n${randomBytes(64).toString('hex')}\n%%EOF\n`)
}

export async function shippedUnits(db: Knex, o: { tag: string; count: number; customer: 'QUILL' | 'SALT'; certify?: boolean | 'unrendered'; serials?: string[]; product?: string }): Promise<ShippedSet> {
  const product = DEMO_PRODUCTS.find((p) => p.partNumber === (o.product ?? 'VFW-T3-375'))!
  const station = await db('stations').where({ name: product.multiplier === 3 ? 'ATE-T3-01' : 'ATE-D2-01' }).first('id', 'name')
  const rand = mulberry32(o.tag.length * 7919 + o.count)
  const start = Date.now() - 6 * 3_600_000
  const lot = `${o.tag}-L`
  const serials = o.serials ?? Array.from({ length: o.count }, (_, i) => `${o.tag}-${String(i + 1).padStart(3, '0')}`)
  const runs = serials.flatMap((serial, i) => product.steps.map((step, k) =>
    generateRun({ product, lot, serial, step, startedAt: new Date(start + k * 600_000 + i * 1000), rand, failRate: 0, withTrace: step === 'final' })))
  const results = await ingestBatch(db, station, runs)
  expect(results.filter((r) => r.status !== 201)).toEqual([])
  const customer = await db('customers').where({ code: o.customer }).first('id')
  const quality = await db('users').where({ role: 'quality' }).first('id')
  const code = `SH-${o.tag}`.slice(0, 32)
  const [shipmentId] = await db('shipments').insert({ code, customer_id: customer.id, status: 'released', released_at: new Date(), released_by: quality.id, customer_po: `PO-${o.tag}` })
  const units = await db('units as u').join('lots as l', 'l.id', 'u.lot_id').where('l.code', lot).orderBy('u.serial').select('u.id', 'u.serial')
  await db('shipment_units').insert(units.map((u: any) => ({ shipment_id: shipmentId, unit_id: u.id })))
  const certificates: ShippedSet['certificates'] = []
  if (o.certify !== false) {
    for (const [i, u] of units.entries()) {
      const number = `T-${o.tag}-${i + 1}`.slice(0, 40)
      const verifyCode = randomBytes(16).toString('hex').toUpperCase()
      const pdf = standInPdf(number)
      const rendered = o.certify !== 'unrendered'
      const [id] = await db('certificates').insert({
        number, verify_code: verifyCode, unit_id: u.id, shipment_id: shipmentId, customer_id: customer.id, status: 'valid',
        template_version: 1, snapshot: '{}', issued_at: new Date(), issued_by: quality.id,
        rendered_at: rendered ? new Date() : null, byte_length: rendered ? pdf.length : null,
      })
      if (rendered) await db('certificate_documents').insert({ certificate_id: id, pdf })
      certificates.push({ number, verifyCode, serial: u.serial })
    }
  }
  return { shipmentId: shipmentId!, code, lot, serials: units.map((u: any) => u.serial), certificates }
}

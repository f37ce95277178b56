// Tested units of a demo product (the tripler unless told) in a fresh lot, put on a released shipment of a demo customer
// written straight into the test database, with certificates issued and rendered by the certificate services.
import { randomBytes } from 'node:crypto'
import type { Knex } from 'knex'
import { expect } from 'vitest'
import { DEMO_PRODUCTS } from '../../fixtures/demo-catalogue'
import { generateRun, mulberry32 } from '../../fixtures/run-generator'
import { ingestBatch } from '../../server/services/ingest/ingest-batch'
import { issueCertificates } from '../../server/services/certificates/issue'
import { ensureAllRendered } from '../../server/services/certificates/render-job'
import { fontsFromPackages } from '../../server/services/certificates/fonts'


export type ShippedSet = { shipmentId: number; code: string; lot: string; serials: string[]; certificates: { number: string; verifyCode: string; serial: string }[] }

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
  if (o.certify === 'unrendered') {
    // stand-in rows whose render lease the test holds, so no render job takes them: the test renders them itself
    for (const [i, u] of units.entries()) {
      const number = `T-${o.tag}-${i + 1}`.slice(0, 40)
      const verifyCode = randomBytes(16).toString('hex').toUpperCase()
      await db('certificates').insert({
        number, verify_code: verifyCode, unit_id: u.id, shipment_id: shipmentId, customer_id: customer.id, status: 'valid',
        template_version: 1, snapshot: '{}', issued_at: new Date(), issued_by: quality.id,
        render_lease_owner: 'test', render_lease_until: new Date(Date.now() + 3_600_000),
      })
      certificates.push({ number, verifyCode, serial: u.serial })
    }
  } else if (o.certify !== false) {
    // issued as a release issues them, and rendered at once
    const issued = await db.transaction((trx) => issueCertificates(trx, { shipmentId: shipmentId!, issuedBy: quality.id, now: new Date(), units: units.map((u: any) => ({ unitId: Number(u.id) })) }))
    await ensureAllRendered(db, issued.map((c) => c.certificateId), fontsFromPackages())
    const serialOf = new Map(units.map((u: any) => [Number(u.id), u.serial as string]))
    for (const c of issued) certificates.push({ number: c.number, verifyCode: c.verifyCode, serial: serialOf.get(c.unitId)! })
  }
  return { shipmentId: shipmentId!, code, lot, serials: units.map((u: any) => u.serial), certificates }
}

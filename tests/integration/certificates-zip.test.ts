// The shipment ZIP reads certificate documents a page at a time and reads the next page only once the reader has
// taken the previous one, so a slow download never gathers a whole shipment in memory.
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { shipmentCertificatesZip, zipEntryName } from '../../server/services/portal/certificates-zip'
import { shippedUnits, type ShippedSet } from '../support/shipped-units'
import { zipEntries } from '../support/zip-entries'

let db: Knex
let set: ShippedSet
const tag = `ZP${Date.now().toString(36).slice(-5).toUpperCase()}${process.pid % 100}`
const UNITS = 60
const DOC_BYTES = 256 * 1024

beforeAll(async () => {
  db = createKnex(connectionFromEnv(), { min: 0, max: 4 })
  set = await shippedUnits(db, { tag, count: UNITS, customer: 'QUILL', certify: 'unrendered' })
}, 120_000)

afterAll(async () => { await db.destroy() })

describe('certificates ZIP of a shipment', () => {
  it('renders page by page as the reader consumes, and holds every certificate in force once read to the end', async () => {
    const pages: number[] = []
    const docs = new Map<string, Buffer>()
    // stands in for the renderer: stores a large document for each certificate of the page it is asked about
    const render = async (d: Knex, rows: { id: number; number: string }[]) => {
      pages.push(rows.length)
      for (const r of rows) {
        const pdf = Buffer.concat([Buffer.from(`%PDF-1.4\n% ${r.number}\n`), Buffer.alloc(DOC_BYTES, r.id % 251)])
        docs.set(r.number, pdf)
        await d('certificate_documents').insert({ certificate_id: r.id, pdf })
        await d('certificates').where({ id: r.id }).update({ rendered_at: new Date(), byte_length: pdf.length })
      }
    }
    const stream = shipmentCertificatesZip(db, set.shipmentId, render)
    // nobody reads yet: the first page is written and the archive waits
    await new Promise((r) => setTimeout(r, 800))
    expect(pages).toEqual([25])

    const chunks: Buffer[] = []
    for await (const c of stream) chunks.push(c as Buffer)
    expect(pages).toEqual([25, 25, 10])
    const entries = zipEntries(Buffer.concat(chunks))
    expect(entries.map((e) => e.name).sort()).toEqual(set.certificates.map((c) => zipEntryName(c)).sort())
    for (const e of entries) {
      expect(e.crcOk).toBe(true)
      expect(e.data.equals(docs.get(set.certificates.find((c) => e.name === zipEntryName(c))!.number)!)).toBe(true)
    }
  })

  it('leaves out superseded and revoked certificates', async () => {
    const [first, second] = set.certificates
    await db('certificates').where({ number: first!.number }).update({ status: 'superseded' })
    await db('certificates').where({ number: second!.number }).update({ status: 'revoked' })
    const chunks: Buffer[] = []
    for await (const c of shipmentCertificatesZip(db, set.shipmentId, null)) chunks.push(c as Buffer)
    const names = zipEntries(Buffer.concat(chunks)).map((e) => e.name)
    expect(names).toHaveLength(UNITS - 2)
    expect(names).not.toContain(zipEntryName(first!))
    expect(names).not.toContain(zipEntryName(second!))
  })
})

// All certificates in force of a shipment as one ZIP, written as it is read: certificate documents are read a few
// dozen at a time and the next page is read only once the archive has passed the previous one on.
import { once } from 'node:events'
import type { PassThrough, Readable } from 'node:stream'
import type { Knex } from 'knex'
import { ZipFile } from 'yazl'
import { certificateDocuments, shipmentCertificatesPage, shipmentCertificateTotals, type ShipmentCertificateRow } from '../../database/repositories/portal'

const PAGE = 25
// local header (30) + central entry (46) + the name twice, per file; the end record (22)
const ENTRY_OVERHEAD = 76
const END_RECORD = 22

export type CertificateRenderer = (db: Knex, rows: ShipmentCertificateRow[]) => Promise<void>

export type ZipPlan = { files: number; expectedBytes: number }

export function zipEntryName(row: { serial: string; number: string }): string {
  return `${row.serial}_${row.number}.pdf`.replace(/[^A-Za-z0-9._-]/g, '_')
}

/** How many files the archive will hold and about how many bytes (exact once every certificate is rendered). */
export async function planShipmentZip(db: Knex, shipmentId: number): Promise<ZipPlan> {
  const t = await shipmentCertificateTotals(db, shipmentId)
  const average = t.rendered ? t.bytes / t.rendered : 0
  // names are "<serial>_<number>.pdf"; 40 characters is a fair guess without reading them all
  const expectedBytes = Math.round(t.bytes + average * (t.files - t.rendered) + t.files * (ENTRY_OVERHEAD + 2 * 40) + END_RECORD)
  return { files: t.files, expectedBytes }
}

/**
 * The archive as a stream. `render` is asked to render a page's certificates that have no document yet; one still
 * missing afterwards is left out, and the archive then ends with fewer files than announced.
 */
export function shipmentCertificatesZip(db: Knex, shipmentId: number, render: CertificateRenderer | null): Readable {
  const zip = new ZipFile()
  const out = zip.outputStream as unknown as PassThrough
  void (async () => {
    let after = 0
    for (;;) {
      const page = await shipmentCertificatesPage(db, shipmentId, after, PAGE)
      if (!page.length) break
      after = page[page.length - 1]!.id
      if (render && page.some((c) => !c.rendered)) await render(db, page.filter((c) => !c.rendered))
      const docs = await certificateDocuments(db, page.map((c) => c.id))
      for (const c of page) {
        const pdf = docs.get(c.id)
        // PDFs are compressed already: stored as they are
        if (pdf) zip.addBuffer(pdf, zipEntryName(c), { mtime: new Date(c.issuedAt), compress: false })
      }
      // yazl writes one stored entry per turn of the event loop; then wait for the reader before reading more, so a
      // slow download never gathers the shipment in memory
      for (let i = 0; i <= page.length; i++) await new Promise((r) => setImmediate(r))
      while (out.writableNeedDrain && !out.destroyed) await Promise.race([once(out, 'drain'), once(out, 'close')])
      if (out.destroyed) return
    }
    zip.end()
  })().catch((e) => out.destroy(e instanceof Error ? e : new Error(String(e))))
  return out
}

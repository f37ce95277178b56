import PDFDocument from 'pdfkit'

/** A one-line PDF written by an independent library (pdfkit), as a laboratory's system would send a certificate. */
export function pdfWithText(text: string): Promise<Buffer> {
  return new Promise((done) => {
    const doc = new PDFDocument()
    const parts: Buffer[] = []
    doc.on('data', (b: Buffer) => parts.push(b))
    doc.on('end', () => done(Buffer.concat(parts)))
    doc.text(text)
    doc.end()
  })
}

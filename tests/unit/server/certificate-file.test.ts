import { createHash } from 'node:crypto'
import { describe, expect, it } from 'vitest'
import { CERTIFICATE_MAX_BYTES, decodeCertificatePdf } from '../../../server/services/calibration/certificate-file'
import { pdfWithText } from '../../support/pdf'

const pdfkitDocument = () => pdfWithText('Certificate of calibration')

/** A buffer of exactly n bytes with a PDF header and end-of-file marker (ISO 32000-1, 7.5.2 and 7.5.5). */
function pdfShaped(n: number): Buffer {
  const b = Buffer.alloc(n, 0x20)
  b.write('%PDF-1.7\n', 0, 'latin1')
  b.write('%%EOF\n', n - 6, 'latin1')
  return b
}

describe('certificate documents', () => {
  it('accepts a PDF written by pdfkit and gives its SHA-256', async () => {
    const pdf = await pdfkitDocument()
    const r = decodeCertificatePdf(pdf.toString('base64'))
    expect(r.ok).toBe(true)
    if (r.ok) {
      expect(r.pdf.equals(pdf)).toBe(true)
      expect(r.sha256).toBe(createHash('sha256').update(pdf).digest('hex'))
    }
  })

  it('refuses other files by their bytes, whatever they are called', () => {
    const png = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 0, 0, 0, 0])
    expect(decodeCertificatePdf(png.toString('base64'))).toMatchObject({ ok: false, status: 422, message: expect.stringMatching(/not a PDF/) })
    expect(decodeCertificatePdf(Buffer.from('Certificate 1234: in tolerance').toString('base64'))).toMatchObject({ ok: false, status: 422 })
    // the header alone is not a document: a cut-off upload lacks the end-of-file marker
    expect(decodeCertificatePdf(Buffer.from('%PDF-1.4\n1 0 obj\n').toString('base64'))).toMatchObject({ ok: false, status: 422, message: expect.stringMatching(/%%EOF/) })
  })

  it('refuses text that is not base64', () => {
    expect(decodeCertificatePdf('%PDF-1.4 not encoded')).toMatchObject({ ok: false, status: 422 })
    expect(decodeCertificatePdf('abc')).toMatchObject({ ok: false, status: 422 })
  })

  it('takes exactly 5 MiB and refuses one byte more, as too large', () => {
    expect(CERTIFICATE_MAX_BYTES).toBe(5 * 1024 * 1024)
    expect(decodeCertificatePdf(pdfShaped(CERTIFICATE_MAX_BYTES).toString('base64')).ok).toBe(true)
    expect(decodeCertificatePdf(pdfShaped(CERTIFICATE_MAX_BYTES + 1).toString('base64'))).toMatchObject({ ok: false, status: 413 })
  })
})

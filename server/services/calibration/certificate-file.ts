// A calibration certificate arrives as base64 inside the JSON body; it is kept only if it is a PDF of at most 5 MiB.
import { createHash } from 'node:crypto'

export const CERTIFICATE_MAX_BYTES = 5 * 1024 * 1024

export type CertificateCheck =
  | { ok: true; pdf: Buffer; sha256: string }
  | { ok: false; status: 413 | 422; message: string }

const BASE64 = /^[A-Za-z0-9+/]*={0,2}$/

/**
 * Decodes and checks the document. A PDF file begins with the header "%PDF-" and a version, and its last lines end
 * with the "%%EOF" marker (ISO 32000-1:2008, 7.5.2 and 7.5.5); both are checked, not the file name or a declared type.
 */
export function decodeCertificatePdf(base64: string): CertificateCheck {
  if (base64.length % 4 !== 0 || !BASE64.test(base64)) return { ok: false, status: 422, message: 'must be the bytes of a PDF file, base64-encoded' }
  const padding = base64.endsWith('==') ? 2 : base64.endsWith('=') ? 1 : 0
  const bytes = (base64.length / 4) * 3 - padding
  if (bytes > CERTIFICATE_MAX_BYTES) return { ok: false, status: 413, message: `is ${(bytes / 1048576).toFixed(1)} MiB; a certificate may be at most 5 MiB` }
  const pdf = Buffer.from(base64, 'base64')
  if (!/^%PDF-[12]\.\d/.test(pdf.subarray(0, 8).toString('latin1'))) return { ok: false, status: 422, message: 'is not a PDF file (it does not begin with %PDF-)' }
  if (!pdf.subarray(Math.max(0, pdf.length - 1024)).toString('latin1').includes('%%EOF')) {
    return { ok: false, status: 422, message: 'is not a complete PDF file (no %%EOF marker at its end)' }
  }
  return { ok: true, pdf, sha256: createHash('sha256').update(pdf).digest('hex') }
}

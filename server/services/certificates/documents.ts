// The stored certificate document for a download, and what the public verification states.
import type { Knex } from 'knex'
import type { CertificateVerification } from '../../../shared/types/certificate'
import { certificateWithDocument, verificationByCode } from '../../database/repositories/certificate-documents'
import { RetryLater, RuleError } from '../rule-error'
import type { CertificateFonts } from './fonts'
import { ensureRendered } from './render-job'
import { normaliseVerifyCode } from './verify-code'

export type CertificateFile = { number: string; sha256: string; pdf: Buffer }

/**
 * A certificate's document as stored, rendered first if it was not yet. `customerId` limits a customer to its own
 * certificates; another customer's number reads exactly like a number that does not exist.
 */
export async function certificateDocument(db: Knex, fonts: () => Promise<CertificateFonts>, number: string, customerId: number | null): Promise<CertificateFile> {
  const cert = number.length <= 40 ? await certificateWithDocument(db, number) : undefined
  if (!cert || (customerId !== null && cert.customerId !== customerId)) throw new RuleError(404, 'No certificate with this number.')
  if (cert.pdf && cert.sha256) return { number: cert.number, sha256: cert.sha256, pdf: cert.pdf }
  // a render held elsewhere too long throws RenderUnavailable, answered 503 with Retry-After
  const mine = await ensureRendered(db, cert.id, await fonts())
  if (mine) return { number: cert.number, ...mine }
  // stored by another render meanwhile
  const stored = await certificateWithDocument(db, number)
  if (!stored?.pdf || !stored.sha256) throw new RetryLater('The certificate document is being prepared; retry shortly.')
  return { number: stored.number, sha256: stored.sha256, pdf: stored.pdf }
}

const UNKNOWN = 'No certificate has this verification code.'

/** What anyone may learn from a verification code; an unknown and a malformed code read the same. */
export async function verifyCertificate(db: Knex, code: string): Promise<CertificateVerification> {
  const normal = normaliseVerifyCode(code)
  const row = normal ? await verificationByCode(db, normal) : undefined
  if (!row) throw new RuleError(404, UNKNOWN)
  return {
    serial: row.serial, partNumber: row.partNumber, number: row.number, issuedAt: new Date(row.issuedAt).toISOString(),
    status: row.status, sha256: row.renderedAt ? row.sha256 : null, rendered: row.renderedAt != null,
  }
}

import type { Knex } from 'knex'
import type { CertificateNotices } from '../../../shared/types/certificate-notice'
import { certificateNotices } from '../../database/repositories/certificate-notices'

/** Revocations by a retest stay listed this long; certificates waiting for reissue stay until reissued or revoked. */
export const NOTICE_DAYS = 30

export async function noticesForQuality(db: Knex, now = new Date()): Promise<CertificateNotices> {
  return { notices: await certificateNotices(db, new Date(now.getTime() - NOTICE_DAYS * 86_400_000)), days: NOTICE_DAYS }
}

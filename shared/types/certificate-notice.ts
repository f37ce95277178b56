// Certificates a retest after issue has touched: what quality must act on (reissue) or know about (revoked).

export type CertificateNotice = {
  number: string
  partNumber: string
  serial: string
  shipmentId: number
  shipmentCode: string
  customer: string
  /** revoked: a failing retest revoked it; reissue: a passing retest waits for quality to reissue it */
  kind: 'revoked' | 'reissue'
  step: string | null
  retestStartedAt: string | null
  station: string | null
  changedAt: string | null
}

export type CertificateNotices = { notices: CertificateNotice[]; days: number }

import type { CertificateNotices } from '#shared/types/certificate-notice'

export function useCertificateNotices() {
  return useFetch<CertificateNotices>('/api/certificate-notices', { key: 'certificate-notices', default: () => ({ notices: [], days: 30 }) })
}

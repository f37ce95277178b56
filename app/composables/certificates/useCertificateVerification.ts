import type { CertificateVerification } from '#shared/types/certificate'

/**
 * The public record behind a verification code (no sign-in). Fetched by the browser itself, so the per-address
 * limit counts the reader's address, not the server's own rendering of the page.
 */
export function useCertificateVerification(code: Ref<string>) {
  return useFetch<CertificateVerification | null>(() => `/api/verify/${encodeURIComponent(code.value)}`, {
    watch: [code],
    server: false,
    default: () => null,
  })
}

/** SHA-256 of a file, in hex, computed in the browser: the file never leaves it. */
export async function sha256OfFile(file: Blob): Promise<string> {
  const digest = await crypto.subtle.digest('SHA-256', await file.arrayBuffer())
  return [...new Uint8Array(digest)].map((b) => b.toString(16).padStart(2, '0')).join('')
}

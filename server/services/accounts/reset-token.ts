import { createHash, randomBytes } from 'node:crypto'

/** How long an e-mailed link lets its holder set a password. */
export const RESET_LIFETIME_MS = 30 * 60_000

/** 256 random bits, URL-safe (43 characters). */
export function newResetToken(): string {
  return randomBytes(32).toString('base64url')
}

export function hashResetToken(token: string): Buffer {
  return createHash('sha256').update(token, 'utf8').digest()
}

/** Also hashes the e-mail address a request names, as the key of its request counter. */
export function hashEmailKey(email: string): string {
  return createHash('sha256').update(email.trim().toLowerCase(), 'utf8').digest('hex')
}

export function resetLink(siteUrl: string, token: string): string {
  return `${siteUrl}/reset-password/${token}`
}

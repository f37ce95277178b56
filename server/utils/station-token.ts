import { createHash, randomBytes, timingSafeEqual } from 'node:crypto'

const PREFIX = 'tst_'

/** A new bearer token: shown once, stored only as its SHA-256. */
export function generateStationToken(): { token: string; hash: string; hint: string } {
  const token = PREFIX + randomBytes(32).toString('base64url')
  return { token, hash: hashToken(token), hint: tokenHint(token) }
}

export function hashToken(token: string): string {
  return createHash('sha256').update(token, 'utf8').digest('hex')
}

export function tokenHint(token: string): string {
  return token.slice(0, 12)
}

export function tokenLooksValid(token: string): boolean {
  return token.startsWith(PREFIX) && /^[A-Za-z0-9_-]{40,80}$/.test(token)
}

export function hashesEqual(a: string, b: string): boolean {
  const x = Buffer.from(a, 'hex')
  const y = Buffer.from(b, 'hex')
  return x.length === y.length && timingSafeEqual(x, y)
}

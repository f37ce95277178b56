import { createHash } from 'node:crypto'
import { clearWindow, countRequest, readWindow } from '../database/repositories/request-limits'
import { envCount, type RequestLimit } from './request-limit'

// Failed password attempts (sign-in, the current password on /account, a signature) counted per account and per
// client address in fixed windows in `request_limits`, so the limits hold across every app instance. The account
// is keyed by the SHA-256 of its lower-case e-mail address (the table never holds the address itself).

/** TERCET_SIGNIN_ACCOUNT_LIMIT failures per account in 15 minutes (default 5). */
export function accountFailureLimit(): RequestLimit {
  return { bucket: 'signin-account', limit: envCount('TERCET_SIGNIN_ACCOUNT_LIMIT', 5), windowMs: 15 * 60_000 }
}

/** TERCET_SIGNIN_ADDRESS_LIMIT failures per client address in 15 minutes (default 25). */
export function addressFailureLimit(): RequestLimit {
  return { bucket: 'signin-address', limit: envCount('TERCET_SIGNIN_ADDRESS_LIMIT', 25), windowMs: 15 * 60_000 }
}

export function accountKey(email: string): string {
  return createHash('sha256').update(email.trim().toLowerCase(), 'utf8').digest('hex')
}

async function waitOf(rule: RequestLimit, key: string, now: Date): Promise<number> {
  const w = await readWindow(useDb(), rule.bucket, key.slice(0, 80), now, rule.windowMs)
  if (!w || w.hits < rule.limit) return 0
  return Math.max(1, Math.ceil((w.windowStart.getTime() + rule.windowMs - now.getTime()) / 1000))
}

/** Seconds until the account and the address may try a password again; 0 when they may now. */
export async function passwordAttemptWait(email: string, address: string, now = new Date()): Promise<number> {
  const [a, b] = await Promise.all([waitOf(accountFailureLimit(), accountKey(email), now), waitOf(addressFailureLimit(), address, now)])
  return Math.max(a, b)
}

export async function notePasswordFailure(email: string, address: string, now = new Date()): Promise<void> {
  const db = useDb()
  const account = accountFailureLimit()
  const client = addressFailureLimit()
  await countRequest(db, account.bucket, accountKey(email), now, account.windowMs)
  await countRequest(db, client.bucket, address.slice(0, 80), now, client.windowMs)
}

/** A right password clears the account's failures (the address's stay: one address guessing many accounts). */
export async function clearAccountFailures(email: string): Promise<void> {
  await clearWindow(useDb(), accountFailureLimit().bucket, accountKey(email))
}

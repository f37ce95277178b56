import type { H3Event } from 'h3'
import { countRequest, dropStaleCounters } from '../database/repositories/request-limits'
import { clientAddress } from './client-address'
import { problem } from './problem'

export type RequestLimit = { bucket: string; limit: number; windowMs: number }

let calls = 0

/**
 * Counts the request against its client's fixed window in the database (so every app instance shares it) and
 * answers 429 with Retry-After once the window's limit is spent.
 */
export async function enforceRequestLimit(event: H3Event, rule: RequestLimit, now = new Date()): Promise<void> {
  await enforceKeyLimit(clientAddress(event), rule, now)
}

/** The same fixed window for any key (a client address, a hashed e-mail address…); keys longer than 80 are cut. */
export async function enforceKeyLimit(key: string, rule: RequestLimit, now = new Date(), detail = 'Too many requests from this address; try again later.'): Promise<void> {
  const db = useDb()
  const { hits, windowStart } = await countRequest(db, rule.bucket, key.slice(0, 80), now, rule.windowMs)
  // now and then, counters of windows long past are dropped (one indexed delete)
  if (++calls % 500 === 0) await dropStaleCounters(db, new Date(now.getTime() - Math.max(rule.windowMs, 86_400_000)))
  if (hits > rule.limit) {
    const retryAfter = Math.max(1, Math.ceil((windowStart.getTime() + rule.windowMs - now.getTime()) / 1000))
    throw problem(429, detail, { headers: { 'Retry-After': String(retryAfter) } })
  }
}

/** Public verification: TERCET_VERIFY_LIMIT requests per minute per client address (default 60). */
export function verifyLimit(): RequestLimit {
  return { bucket: 'verify', limit: envCount('TERCET_VERIFY_LIMIT', 60), windowMs: 60_000 }
}

/** A positive whole number from the environment, or the fallback. */
export function envCount(name: string, fallback: number): number {
  const n = Number(process.env[name])
  return Number.isInteger(n) && n > 0 ? n : fallback
}

/** Password-reset requests per client address per hour (TERCET_RESET_ADDRESS_LIMIT, default 20). */
export function resetAddressLimit(): RequestLimit {
  return { bucket: 'reset-address', limit: envCount('TERCET_RESET_ADDRESS_LIMIT', 20), windowMs: 3_600_000 }
}

/** Password-reset requests per e-mail address per hour (TERCET_RESET_EMAIL_LIMIT, default 5). */
export function resetEmailLimit(): RequestLimit {
  return { bucket: 'reset-email', limit: envCount('TERCET_RESET_EMAIL_LIMIT', 5), windowMs: 3_600_000 }
}

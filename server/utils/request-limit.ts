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
  const db = useDb()
  const { hits, windowStart } = await countRequest(db, rule.bucket, clientAddress(event).slice(0, 80), now, rule.windowMs)
  // now and then, counters of windows long past are dropped (one indexed delete)
  if (++calls % 500 === 0) await dropStaleCounters(db, new Date(now.getTime() - Math.max(rule.windowMs, 86_400_000)))
  if (hits > rule.limit) {
    const retryAfter = Math.max(1, Math.ceil((windowStart.getTime() + rule.windowMs - now.getTime()) / 1000))
    throw problem(429, 'Too many requests from this address; try again later.', { headers: { 'Retry-After': String(retryAfter) } })
  }
}

/** Public verification: TERCET_VERIFY_LIMIT requests per minute per client address (default 60). */
export function verifyLimit(): RequestLimit {
  const n = Number(process.env.TERCET_VERIFY_LIMIT)
  return { bucket: 'verify', limit: Number.isInteger(n) && n > 0 ? n : 60, windowMs: 60_000 }
}

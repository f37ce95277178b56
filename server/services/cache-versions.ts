// Per-process caches that the database invalidates: each change raises its kind's counter in `cache_versions` in its
// own transaction, whichever instance made it, and every cache compares the counter it reads with the one its entries
// were loaded at. Nothing cached is trusted past a counter change, so a change holds on every instance at the next request.
import type { Knex } from 'knex'
import { readCacheVersions, type CacheVersions } from '../database/repositories/cache-versions'

type VersionRead = { startedAt: number; value: Promise<CacheVersions> }
const reads = new WeakMap<Knex, VersionRead>()

/**
 * The counters as read by a statement sent after `notBefore` (a `performance.now()` time, by default now): a read
 * already sent after that moment is shared, so concurrent requests cost one read between them, while a request never
 * takes a read that began before it did (and might miss a change committed just before it arrived).
 */
export function cacheVersions(db: Knex, notBefore = performance.now()): Promise<CacheVersions> {
  const last = reads.get(db)
  if (last && last.startedAt > notBefore) return last.value
  const read: VersionRead = { startedAt: performance.now(), value: readCacheVersions(db) }
  // performance.now() is finer than a millisecond, but two calls may still read the same instant: this read counts
  // only for requests that came strictly before it
  reads.set(db, read)
  read.value.catch(() => { if (reads.get(db) === read) reads.delete(db) })
  return read.value
}

// A backstop for a change made by hand in SQL without raising its counter: entries are reloaded after a minute anyway.
const MAX_AGE_MS = 60_000

/**
 * Entries loaded at a counter value: a higher value read drops them all; a reader that read an older value (it began
 * before the change) loads for itself and stores nothing. Keys come from posted bodies (part numbers, lot codes), so
 * past `maxEntries` the oldest go and posts of ever new keys cannot grow the process's memory.
 */
export class VersionedCache<K, V> {
  private version = 0
  private map = new Map<K, { at: number; value: V }>()
  constructor(private readonly maxEntries = 10_000, private readonly maxAgeMs = MAX_AGE_MS) {}

  async get(key: K, version: number, load: () => Promise<V>): Promise<V> {
    if (version > this.version) { this.map.clear(); this.version = version }
    const hit = version === this.version ? this.map.get(key) : undefined
    if (hit && Date.now() - hit.at < this.maxAgeMs) return hit.value
    const value = await load()
    if (version === this.version) {
      this.map.delete(key)
      this.map.set(key, { at: Date.now(), value })
      if (this.map.size > this.maxEntries) for (const k of this.map.keys()) { this.map.delete(k); if (this.map.size <= this.maxEntries / 2) break }
    }
    return value
  }

  clear(): void { this.map.clear() }
}

// Short-lived in-process caches for what every posted run reads: products and approved limits (calibration history
// has its own cache, invalidated through the database: services/calibration/in-force.ts).
// Writers in this process invalidate them at once; the TTL bounds staleness from other processes.
const TTL_MS = 10_000

type Entry<T> = { at: number; value: T }

export class TtlCache<K, V> {
  private map = new Map<K, Entry<V>>()
  constructor(private ttl = TTL_MS, private maxEntries = 10_000) {}
  async get(key: K, load: () => Promise<V>): Promise<V> {
    const hit = this.map.get(key)
    if (hit && Date.now() - hit.at < this.ttl) return hit.value
    const value = await load()
    this.map.delete(key)
    this.map.set(key, { at: Date.now(), value })
    // keys come from posted bodies (part numbers, lot codes): past the cap the oldest entries go, so posts of ever new
    // keys cannot grow the process's memory
    if (this.map.size > this.maxEntries) for (const k of this.map.keys()) { this.map.delete(k); if (this.map.size <= this.maxEntries / 2) break }
    return value
  }
  delete(key: K): void { this.map.delete(key) }
  clear(): void { this.map.clear() }
}

export const productCache = new TtlCache<string, unknown>()
export const specCache = new TtlCache<number, unknown>()
export const lotCache = new TtlCache<string, unknown>(60_000)

/** Call after a spec revision is approved (or limits in force change) for a product. */
export function invalidateSpecCache(productId?: number): void {
  if (productId === undefined) specCache.clear()
  else specCache.delete(productId)
  productCache.clear()
}

/** Call after a lot changes product or is removed; lot ids never change otherwise. */
export function invalidateLotCache(): void {
  lotCache.clear()
}

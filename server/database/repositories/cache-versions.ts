import type { Knex } from 'knex'
import { causalRows } from '../causal-read'

/** The kinds of data app instances cache: station tokens, products with their approved limits, lots. */
export const CACHE_DOMAINS = ['catalogue', 'lots', 'tokens'] as const
export type CacheDomain = (typeof CACHE_DOMAINS)[number]
export type CacheVersions = Record<CacheDomain, number>

/** Every counter in one primary-key read, as a causal read on a cluster. */
export async function readCacheVersions(db: Knex): Promise<CacheVersions> {
  const rows = await causalRows<{ domain: string; version: number | string }>(db, 'SELECT domain, version FROM cache_versions')
  const out = { catalogue: 0, lots: 0, tokens: 0 }
  for (const r of rows) if ((CACHE_DOMAINS as readonly string[]).includes(r.domain)) out[r.domain as CacheDomain] = Number(r.version)
  return out
}

/** Raises the domain's counter; call inside the transaction of the change, so instances see both at once. */
export async function bumpCacheVersion(trx: Knex, domain: CacheDomain): Promise<void> {
  await trx.raw('UPDATE cache_versions SET version = version + 1 WHERE domain = ?', [domain])
}

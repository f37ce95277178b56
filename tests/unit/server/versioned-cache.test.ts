import type { Knex } from 'knex'
import { describe, expect, it } from 'vitest'
import { cacheVersions, VersionedCache } from '../../../server/services/cache-versions'

// The per-process caches trust an entry only at the counter value it was loaded at (cache_versions), and requests
// share a counter read only when it was sent after they arrived.

describe('VersionedCache', () => {
  it('serves an entry while the counter stands and loads again once it moves', async () => {
    const c = new VersionedCache<string, number>()
    let loads = 0
    const load = async () => ++loads
    expect(await c.get('a', 1, load)).toBe(1)
    expect(await c.get('a', 1, load)).toBe(1)
    expect(await c.get('a', 2, load)).toBe(2)
    expect(await c.get('a', 2, load)).toBe(2)
    expect(loads).toBe(2)
  })

  it('lets a reader of an older counter load for itself without storing what it read', async () => {
    const c = new VersionedCache<string, string>()
    expect(await c.get('k', 5, async () => 'new')).toBe('new')
    // began before the change: its value may be the old one, so it is neither served from nor put into the cache
    expect(await c.get('k', 4, async () => 'old')).toBe('old')
    expect(await c.get('k', 5, async () => 'reloaded')).toBe('new')
  })

  it('does not keep a value loaded at a counter that moved on while it loaded', async () => {
    const c = new VersionedCache<string, string>()
    let finish!: (v: string) => void
    const slow = c.get('k', 1, () => new Promise<string>((r) => { finish = r }))
    expect(await c.get('k', 2, async () => 'fresh')).toBe('fresh')
    finish('stale')
    expect(await slow).toBe('stale')
    expect(await c.get('k', 2, async () => 'again')).toBe('fresh')
  })

  it('keeps at most its cap of entries, dropping the oldest', async () => {
    const c = new VersionedCache<number, number>(10)
    for (let i = 0; i < 25; i++) await c.get(i, 1, async () => i)
    let loads = 0
    await c.get(24, 1, async () => { loads++; return -1 })
    await c.get(0, 1, async () => { loads++; return -1 })
    expect(loads).toBe(1)
  })
})

describe('cacheVersions', () => {
  /** A stand-in pool that counts the counter reads it is sent. */
  function fakeDb() {
    const sent: string[] = []
    const db = { raw: async (sql: string) => { sent.push(sql); return [[{ domain: 'tokens', version: sent.length }, { domain: 'catalogue', version: 7 }]] } }
    return { db: db as unknown as Knex, sent }
  }

  it('reads every counter in one causal statement', async () => {
    const { db, sent } = fakeDb()
    expect(await cacheVersions(db)).toEqual({ tokens: 1, catalogue: 7, lots: 0 })
    expect(sent).toEqual(['SET STATEMENT wsrep_sync_wait=1 FOR SELECT domain, version FROM cache_versions'])
  })

  it('shares a read sent after the request arrived, never one sent before it', async () => {
    const { db, sent } = fakeDb()
    const arrivedFirst = performance.now()
    const a = cacheVersions(db, arrivedFirst)
    const b = cacheVersions(db, arrivedFirst)
    expect(await b).toBe(await a)
    expect(sent).toHaveLength(1)
    const arrivedLater = performance.now()
    expect((await cacheVersions(db, arrivedLater)).tokens).toBe(2)
    expect(sent).toHaveLength(2)
  })
})

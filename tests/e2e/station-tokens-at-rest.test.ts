import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { call, signIn } from '../support/http'
import { stationTokens } from '../support/stations'

// Station tokens are kept only as their SHA-256 (and a 12-character hint): no column of station_tokens, read in any
// encoding a column might use, holds a plain token.

let db: Knex
beforeAll(() => { db = createKnex(connectionFromEnv(), { min: 0, max: 2 }) })
afterAll(async () => { await db.destroy() })

/** Every form a stored value could hold the token in: the text itself, and a binary value as bytes, hex and base64. */
function readings(value: unknown): string[] {
  if (value == null) return []
  if (Buffer.isBuffer(value)) return [value.toString('utf8'), value.toString('latin1'), value.toString('hex'), value.toString('base64'), value.toString('base64url')]
  if (value instanceof Date) return [value.toISOString()]
  return [String(value)]
}

describe('station tokens at rest', () => {
  it('no column of station_tokens holds a plain token, seeded or newly issued', async () => {
    const engineer = await signIn('engineer@tercet.test')
    const made = await call('POST', '/api/stations', { cookie: engineer, body: { name: `AT-REST-${process.pid}-${Date.now() % 1e6}`, location: 'Line C', description: 'token storage probe' } })
    expect(made.status).toBe(201)
    const rotated = await call('POST', `/api/stations/${made.body.station.id}/token`, { cookie: engineer })
    expect(rotated.status).toBe(201)
    const tokens = [...Object.values(stationTokens()), made.body.token as string, rotated.body.token as string]
    expect(tokens.length).toBeGreaterThan(2)
    for (const t of tokens) expect(t).toMatch(/^tst_[A-Za-z0-9_-]{40,}$/)

    const rows = await db('station_tokens').select('*')
    expect(rows.length).toBeGreaterThanOrEqual(tokens.length)
    const stored = rows.flatMap((row) => Object.entries(row).flatMap(([column, value]) => readings(value).map((text) => ({ column, text }))))
    // the token's random part (after the 12 characters of the shown hint) appears nowhere, whole or as the full token
    const hits = tokens.flatMap((t) => stored.filter((s) => s.text.includes(t) || s.text.includes(t.slice(12))).map((s) => s.column))
    expect(hits).toEqual([])
    // and what is kept is the SHA-256 of each token
    const { createHash } = await import('node:crypto')
    const hashes = new Set(stored.map((s) => s.text.toLowerCase()))
    for (const t of tokens) expect(hashes.has(createHash('sha256').update(t).digest('hex'))).toBe(true)
  })
})

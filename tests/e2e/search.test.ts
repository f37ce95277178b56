import { beforeAll, describe, expect, it } from 'vitest'
import { call, signIn, ROLE_ACCOUNTS } from '../support/http'
import { stationTokens, tripleRun } from '../support/stations'

// The header's search: serials, lots and parts by prefix, a few of each, staff only.
const tokens = stationTokens()
const tag = Date.now().toString(36).toUpperCase()
const PREFIX = `SR${tag}`
const LOT = `SRL-${tag}`
let engineer: string

beforeAll(async () => {
  engineer = await signIn(ROLE_ACCOUNTS.engineer)
  // ten units whose serials share a prefix, one of them under the lot searched for
  for (let i = 0; i < 10; i++) {
    const run = tripleRun({ serial: `${PREFIX}-${String(i).padStart(2, '0')}`, lot: LOT })
    const r = await call('POST', '/api/v1/runs', { body: run, token: tokens['ATE-T3-02'] })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
  }
})

const search = (q: string, cookie = engineer) => call('GET', `/api/search?q=${encodeURIComponent(q)}`, { cookie })

describe('GET /api/search', () => {
  it('finds serials by prefix in order, at most eight, and says there are more', async () => {
    const r = await search(PREFIX)
    expect(r.status).toBe(200)
    expect(r.body.units.items.map((u: any) => u.serial)).toEqual(Array.from({ length: 8 }, (_, i) => `${PREFIX}-0${i}`))
    expect(r.body.units.more).toBe(true)
    expect(r.body.units.items[0]).toEqual({ serial: `${PREFIX}-00`, partNumber: 'VFW-T3-375', lot: LOT })
    const one = await search(`${PREFIX}-09`)
    expect(one.body.units).toEqual({ items: [{ serial: `${PREFIX}-09`, partNumber: 'VFW-T3-375', lot: LOT }], more: false })
  })

  it('finds lots and parts by prefix regardless of case', async () => {
    const lots = await search(LOT.toLowerCase())
    expect(lots.body.lots.items).toEqual([{ code: LOT, partNumber: 'VFW-T3-375', status: 'open', engineering: false }])
    const parts = await search('vfw-t3')
    expect(parts.body.parts.items).toEqual([{ partNumber: 'VFW-T3-375', name: expect.any(String) }])
    expect(parts.body.units.items).toEqual([])
    const demo = await search('X8-2612')
    expect(demo.body.lots.items).toEqual([{ code: 'X8-2612-E', partNumber: 'VFW-X8-12G', status: 'open', engineering: true }])
  })

  it('takes % and _ literally rather than as wildcards', async () => {
    for (const q of ['%', '_', `${PREFIX.slice(0, 3)}%`, `S_${tag}`]) {
      const r = await search(q)
      expect(r.status).toBe(200)
      expect([...r.body.units.items, ...r.body.lots.items, ...r.body.parts.items], q).toEqual([])
    }
  })

  it('refuses an empty and an overlong search with a pointer', async () => {
    for (const q of ['', '   ', 'x'.repeat(65)]) {
      const r = await search(q)
      expect(r.status).toBe(400)
      expect(r.body.errors[0].pointer).toBe('/query/q')
    }
    expect((await call('GET', '/api/search', { cookie: engineer })).status).toBe(400)
  })

  it('is not open to customers, whose portal has its own serial search', async () => {
    expect((await search(PREFIX, await signIn(ROLE_ACCOUNTS.customer))).status).toBe(403)
    expect((await search(PREFIX, await signIn(ROLE_ACCOUNTS.operator))).status).toBe(200)
  })
})

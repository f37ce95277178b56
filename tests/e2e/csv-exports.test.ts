// Every CSV the server writes goes through shared/utils/csv.ts: text a spreadsheet would read as a formula (starting
// with = + - @ tab or CR, after the OWASP CSV injection guidance) gets a leading apostrophe, numbers stay numbers.
// (The import rejections CSV is checked the same way in imports.test.ts, the lot units' serials in specs.test.ts.)
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { baseUrl, call, signIn } from '../support/http'
import { shippedUnits } from '../support/shipped-units'
import { tripleRun } from '../support/stations'

let db: Knex
let engineer: string
let quality: string
const tag = `CSV${Date.now().toString(36).toUpperCase()}${process.pid % 100}`

beforeAll(async () => {
  db = createKnex(connectionFromEnv(), { min: 0, max: 2 })
  engineer = await signIn('engineer@tercet.test')
  quality = await signIn('quality@tercet.test')
}, 60_000)
afterAll(async () => { await db.destroy() })

async function csvOf(path: string, cookie: string): Promise<string[][]> {
  const r = await fetch(`${baseUrl()}${path}`, { headers: { cookie } })
  expect(r.status).toBe(200)
  expect(r.headers.get('content-type')).toContain('text/csv')
  const { parseCsvRecords } = await import('../../shared/utils/csv')
  return parseCsvRecords(await r.text())
}

describe('CSV exports neutralise formula-looking text', () => {
  it('the lot units list: a station named like a formula and a serial starting with a minus', async () => {
    const stationName = `=HYPERLINK("http://x.invalid","${tag}")`
    const made = await call('POST', '/api/stations', { cookie: engineer, body: { name: stationName, location: '@SUM(1)', description: 'formula probe' } })
    expect(made.status).toBe(201)
    const lot = `${tag}-U`
    const serial = `-${tag}-1`
    const posted = await call('POST', '/api/v1/runs', { token: made.body.token, body: tripleRun({ lot, serial }) })
    expect(posted.status).toBe(201)

    const [header, ...rows] = await csvOf(`/api/lots/${lot}/units.csv`, engineer)
    const row = rows.find((r) => r[header!.indexOf('serial')] === `'${serial}`)
    expect(row, 'the serial comes out with its apostrophe').toBeDefined()
    expect(row![header!.indexOf('station')]).toBe(`'${stationName}`)
    // counts stay plain numbers
    expect(row![header!.indexOf('runs')]).toBe('1')
  })

  it('the shipment measurements: a serial and a lot starting with a minus escaped, negative readings left as numbers', async () => {
    const set = await shippedUnits(db, { tag: `-${tag}M`, count: 1, customer: 'QUILL', certify: false, serials: [`-${tag}-M1`] })
    const [header, ...rows] = await csvOf(`/api/shipments/${set.shipmentId}/measurements.csv`, quality)
    expect(rows.length).toBeGreaterThan(5)
    const col = (name: string) => header!.indexOf(name)
    for (const r of rows) {
      expect(r[col('serial')]).toBe(`'-${tag}-M1`)
      expect(r[col('lot')]).toBe(`'-${tag}M-L`)
    }
    // phase noise is negative: written as a plain number a spreadsheet reads as one, never with an apostrophe
    const noise = rows.filter((r) => r[col('unit')] === 'dBc/Hz')
    expect(noise.length).toBeGreaterThan(0)
    for (const r of noise) {
      expect(r[col('value')]).toMatch(/^-\d+(\.\d+)?(e[+-]?\d+)?$/)
      expect(Number(r[col('value')])).toBeLessThan(0)
    }
    expect(rows.some((r) => r[col('LSL')]?.startsWith("'") || r[col('USL')]?.startsWith("'"))).toBe(false)
  })

  it('the specification limits: negative limits stay numbers', async () => {
    const revision = await db('spec_revisions as r').join('products as p', 'p.id', 'r.product_id')
      .where('p.part_number', 'VFW-T3-375').whereNotNull('r.approved_at').orderBy('r.revision', 'desc').first('r.id')
    const [header, ...rows] = await csvOf(`/api/revisions/${revision.id}/limits.csv`, engineer)
    const usl = rows.map((r) => r[header!.indexOf('usl')]!).filter((v) => v.startsWith('-') || v.startsWith("'"))
    expect(usl.length).toBeGreaterThan(0)
    for (const v of usl) expect(v).toMatch(/^-\d+(\.\d+)?$/)
  })
})

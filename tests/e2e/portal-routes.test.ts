import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { baseUrl, call, signIn } from '../support/http'
import { shippedUnits, type ShippedSet } from '../support/shipped-units'
import { zipEntries } from '../support/zip-entries'
import { parseCsvRecords } from '../../shared/utils/csv'

let db: Knex
const tag = `PR${Date.now().toString(36).slice(-5).toUpperCase()}${process.pid % 100}`
let quill: ShippedSet
let salt: ShippedSet
const cookies: Record<string, string> = {}

async function raw(path: string, cookie: string) {
  const r = await fetch(baseUrl() + path, { headers: { cookie } })
  return { status: r.status, headers: r.headers, bytes: Buffer.from(await r.arrayBuffer()) }
}

beforeAll(async () => {
  db = createKnex(connectionFromEnv(), { min: 0, max: 2 })
  quill = await shippedUnits(db, { tag: `${tag}Q`, count: 3, customer: 'QUILL' })
  salt = await shippedUnits(db, { tag: `${tag}S`, count: 2, customer: 'SALT' })
  cookies.quill = await signIn('buyer@quillfeather.test')
  cookies.salt = await signIn('buyer@saltmarsh.test')
  cookies.quality = await signIn('quality@tercet.test')
}, 120_000)

afterAll(async () => { await db.destroy() })

describe('serial search', () => {
  it('finds a customer\'s own shipped serials by prefix, and staff find every customer\'s', async () => {
    const q = await call('GET', `/api/portal/units?q=${tag}`, { cookie: cookies.quill })
    expect(q.status).toBe(200)
    expect(q.body.units.map((u: any) => u.serial)).toEqual(quill.serials)
    expect(q.body.units[0]).toMatchObject({ partNumber: 'VFW-T3-375', lot: quill.lot, shipment: { id: quill.shipmentId, code: quill.code }, returned: false })
    const s = await call('GET', `/api/portal/units?q=${tag}`, { cookie: cookies.salt })
    expect(s.body.units.map((u: any) => u.serial)).toEqual(salt.serials)
    const staff = await call('GET', `/api/portal/units?q=${tag}`, { cookie: cookies.quality })
    expect(staff.body.total).toBe(5)
    expect(new Set(staff.body.units.map((u: any) => u.shipment.customer))).toEqual(new Set(['Quillfeather Radio Observatory', 'Saltmarsh Satellite Ground Systems']))
  })

  it('pages, and refuses a prefix that is not a serial', async () => {
    const p2 = await call('GET', `/api/portal/units?q=${tag}Q&page=2&pageSize=2`, { cookie: cookies.quill })
    expect(p2.body).toMatchObject({ total: 3, page: 2, pageSize: 2 })
    expect(p2.body.units.map((u: any) => u.serial)).toEqual([quill.serials[2]])
    // % would be a LIKE wildcard: refused rather than read as "anything"
    const bad = await call('GET', '/api/portal/units?q=%25', { cookie: cookies.quill })
    expect(bad.status).toBe(400)
    expect(bad.headers.get('content-type')).toContain('application/problem+json')
    expect(bad.body.errors[0].pointer).toBe('/q')
    expect((await call('GET', '/api/portal/units?pageSize=101', { cookie: cookies.quill })).status).toBe(400)
  })
})

describe('per-serial view', () => {
  it('shows the latest result at each step in the product\'s order, key characteristics first, with the phase-noise picture', async () => {
    const serial = quill.serials[0]!
    const r = await call('GET', `/api/portal/units/VFW-T3-375/${serial}`, { cookie: cookies.quill })
    expect(r.status).toBe(200)
    expect(r.body.unit).toMatchObject({ serial, partNumber: 'VFW-T3-375', lot: quill.lot, multiplier: 3 })
    expect(r.body.steps.map((s: any) => s.step)).toEqual(['tune', 'burn-in', 'final'])
    const final = r.body.steps[2]
    const firstNonKey = final.values.findIndex((v: any) => !v.key)
    expect(final.values.slice(firstNonKey).every((v: any) => !v.key)).toBe(true)
    expect(final.values.find((v: any) => v.name === 'output_power').label).toBe('Output power')
    const pn = r.body.phaseNoise
    expect(pn.step).toBe('final')
    expect(pn.mask.length).toBeGreaterThan(1)
    expect(pn.trace.length).toBeGreaterThan(10)
    // an ideal ×3 raises the reference's phase noise by 20·log10(3) = 9.54 dB (common practice for frequency multipliers)
    const run = await db('test_runs as t').join('units as u', 'u.id', 't.unit_id').where({ 'u.serial': serial, 't.step': 'final' }).first('t.reference')
    const reference = (typeof run.reference === 'string' ? JSON.parse(run.reference) : run.reference).phaseNoise
    expect(pn.referencePlusN).toHaveLength(reference.length)
    pn.referencePlusN.forEach(([f, v]: [number, number], i: number) => {
      expect(f).toBe(reference[i].offsetHz)
      expect(v - reference[i].value).toBeCloseTo(9.54, 2)
    })
    expect(r.body.certificates).toEqual([expect.objectContaining({ number: quill.certificates[0]!.number, status: 'valid', shipmentCode: quill.code, rendered: true })])
    expect(r.body.history).toEqual([expect.objectContaining({ kind: 'issued', reference: quill.certificates[0]!.number })])
  })

  it('answers another customer\'s unit exactly as a unit that does not exist', async () => {
    const other = await call('GET', `/api/portal/units/VFW-T3-375/${salt.serials[0]}`, { cookie: cookies.quill })
    const none = await call('GET', `/api/portal/units/VFW-T3-375/${tag}-NOPE`, { cookie: cookies.quill })
    expect(other.status).toBe(404)
    expect(other.headers.get('content-type')).toContain('application/problem+json')
    expect(other.body).toEqual(none.body)
    expect((await call('GET', `/api/portal/units/VFW-T3-375/${salt.serials[0]}`, { cookie: cookies.quality })).status).toBe(200)
  })

  it('a serial another part shares is never named to the customer of the first', async () => {
    // the same serial on the doubler, shipped to the other customer
    const shared = await shippedUnits(db, { tag: `${tag}D`, count: 1, customer: 'SALT', serials: [quill.serials[1]!], product: 'VFW-D2-250' })
    const mine = await call('GET', `/api/portal/units/VFW-T3-375/${quill.serials[1]}`, { cookie: cookies.quill })
    expect(JSON.stringify(mine.body)).not.toContain('VFW-D2-250')
    expect(JSON.stringify(mine.body)).not.toContain(shared.code)
    const theirs = await call('GET', `/api/portal/units/VFW-D2-250/${quill.serials[1]}`, { cookie: cookies.quill })
    const none = await call('GET', `/api/portal/units/VFW-D2-250/${tag}-NOPE`, { cookie: cookies.quill })
    expect(theirs.status).toBe(404)
    expect(theirs.body).toEqual(none.body)
    const search = await call('GET', `/api/portal/units?q=${quill.serials[1]}`, { cookie: cookies.quill })
    expect(search.body.units.map((u: any) => u.partNumber)).toEqual(['VFW-T3-375'])
  })
})

describe('shipment exports', () => {
  it('the measurements CSV has one row per unit, run and measurement, numbers in full and units in their column', async () => {
    const r = await raw(`/api/shipments/${quill.shipmentId}/measurements.csv`, cookies.quill)
    expect(r.status).toBe(200)
    expect(r.headers.get('content-type')).toContain('text/csv')
    const text = r.bytes.toString('utf8')
    expect(text).not.toContain('\u2212')
    const [header, ...rows] = parseCsvRecords(text)
    expect(header).toEqual(['serial', 'part', 'lot', 'step', 'attempt', 'tested at (UTC)', 'parameter', 'qualifier (offset [Hz] or harmonic)', 'value', 'unit', 'LSL', 'USL', 'verdict'])
    const stored = await db('measurements as m').join('test_runs as t', 't.id', 'm.run_id').join('units as u', 'u.id', 't.unit_id')
      .join('lots as l', 'l.id', 'u.lot_id').where('l.code', quill.lot).select('u.serial', 't.step', 'm.name', 'm.qualifier', 'm.value', 'm.unit')
    expect(rows).toHaveLength(stored.length)
    expect(new Set(rows.map((c) => c[0]))).toEqual(new Set(quill.serials))
    // every stored value appears with every digit of the double (String(x) is its shortest round-trip form)
    const key = (serial: string, step: string, name: string, value: string) => `${serial}|${step}|${name}|${value}`
    const written = new Set(rows.map((c) => key(c[0]!, c[3]!, c[6]!, c[8]!)))
    const labels: Record<string, string> = { output_power: 'Output power', phase_noise: 'Phase noise', harmonic_rejection: 'Harmonic rejection' }
    for (const m of stored.filter((x: any) => labels[x.name])) expect(written.has(key(m.serial, m.step, labels[m.name]!, String(m.value)))).toBe(true)
    const pn = rows.find((c) => c[6] === 'Phase noise')!
    expect(Number(pn[7])).toBeGreaterThan(0)
    expect(pn[8]!.startsWith('-')).toBe(true)
    expect(pn[9]).toBe('dBc/Hz')
  })

  it('the certificates ZIP holds each certificate in force as <serial>_<number>.pdf, byte for byte', async () => {
    const r = await raw(`/api/shipments/${quill.shipmentId}/certificates.zip`, cookies.quill)
    expect(r.status).toBe(200)
    expect(r.headers.get('content-type')).toBe('application/zip')
    expect(r.headers.get('x-tercet-files')).toBe('3')
    const entries = zipEntries(r.bytes)
    expect(entries.map((e) => e.name).sort()).toEqual(quill.certificates.map((c) => `${c.serial}_${c.number}.pdf`).sort())
    const docs = await db('certificate_documents as d').join('certificates as c', 'c.id', 'd.certificate_id').where('c.shipment_id', quill.shipmentId).select('c.number', 'd.pdf')
    for (const e of entries) {
      expect(e.crcOk).toBe(true)
      expect(e.data.equals(docs.find((d: any) => e.name.endsWith(`_${d.number}.pdf`))!.pdf)).toBe(true)
    }
    expect(Number(r.headers.get('x-tercet-expected-bytes'))).toBeGreaterThan(r.bytes.length * 0.5)
  })

  it('another customer\'s shipment is "no such shipment", as one that does not exist; staff read it', async () => {
    for (const path of ['certificates.zip', 'measurements.csv']) {
      const other = await call('GET', `/api/shipments/${salt.shipmentId}/${path}`, { cookie: cookies.quill })
      const none = await call('GET', `/api/shipments/999999999/${path}`, { cookie: cookies.quill })
      expect(other.status).toBe(404)
      expect(other.body).toEqual(none.body)
      expect((await raw(`/api/shipments/${salt.shipmentId}/${path}`, cookies.quality)).status).toBe(200)
    }
  })
})

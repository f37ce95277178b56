// An instrument found out of tolerance: the review traces exactly the runs, units, lots and certificates it measured
// since it was last found in tolerance, takes quality's decisions all or nothing, and tells each affected customer's
// certificate contacts about their own serials and certificates only.
import { randomBytes } from 'node:crypto'
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { call, signIn, ROLE_ACCOUNTS } from '../support/http'
import { stationTokens, tripleRun } from '../support/stations'

const DAY = 86_400_000
const tag = `CI${Date.now().toString(36)}${process.pid.toString(36)}`.toUpperCase()
const T3 = stationTokens()['ATE-T3-01']!
const midnight = (() => { const n = new Date(); return Date.UTC(n.getUTCFullYear(), n.getUTCMonth(), n.getUTCDate()) })()
/** 00:00 UTC n days ago: calibration dates given as a date alone mean that instant */
const dayStart = (n: number) => new Date(midnight - n * DAY)
const dateOnly = (n: number) => dayStart(n).toISOString().slice(0, 10)
const HOUR = 3_600_000

let db: Knex
let engineer = ''
let quality = ''
let admin = ''
let impactId = 0
const lotA = `${tag}-A`.slice(0, 32)
const lotB = `${tag}-B`.slice(0, 32)
const serial = (name: string) => `${tag}-${name}`
const assets = { a: `IMP-${tag}-A`.slice(0, 32), b: `IMP-${tag}-B`.slice(0, 32) }
const mail = (who: string) => `${who}.${tag}@impact.example`.toLowerCase()
const certs: Record<string, string> = {}
const customers: Record<string, number> = {}

async function instrument(asset: string) {
  const r = await call('POST', '/api/instruments', { cookie: engineer, body: { assetNumber: asset, kind: 'Phase noise analyser', model: 'PN-40', serial: `S-${asset}` } })
  expect(r.status, JSON.stringify(r.body)).toBe(201)
  return r.body.instrument.id as number
}

async function calibrate(id: number, asFound: string, daysAgo: number, n: string) {
  const r = await call('POST', `/api/instruments/${id}/calibrations`, {
    cookie: engineer, body: { certificateNumber: `CAL-${tag}-${n}`, laboratory: 'Invented Metrology Lab', asFound, calibratedOn: dateOnly(daysAgo), dueAt: dateOnly(-300) },
  })
  expect(r.status, JSON.stringify(r.body)).toBe(201)
  return r.body.record as { id: number; impactId: number | null }
}

async function run(name: string, lot: string, at: Date, asset: string) {
  const body = tripleRun({ serial: serial(name), lot, startedAt: at.toISOString(), finishedAt: new Date(at.getTime() + 90_000).toISOString(), instrumentAssets: [asset] })
  const r = await call('POST', '/api/v1/runs', { token: T3, body })
  expect(r.status, JSON.stringify(r.body)).toBe(201)
}

async function customer(code: string, contacts: { who: string; receives: boolean }[]) {
  const [id] = await db('customers').insert({ code: `${code}${tag}`.slice(0, 32), name: `Impact ${code} ${tag}` })
  await db('customer_contacts').insert(contacts.map((c) => ({ customer_id: id, name: c.who, email: mail(c.who), receives_certificates: c.receives })))
  customers[code] = id!
  return id!
}

/** A stand-in certificate row (its render lease held by the test, so no renderer takes it). */
async function certificate(name: string, customerId: number, status: 'valid' | 'superseded' | 'revoked', key = name) {
  const unit = await db('units').where({ serial: serial(name) }).first('id')
  const quality = await db('users').where({ role: 'quality' }).first('id')
  const [shipmentId] = await db('shipments').insert({ code: `SH-${tag}-${key}`.slice(0, 32), customer_id: customerId, status: 'released', released_at: new Date() })
  await db('shipment_units').insert({ shipment_id: shipmentId, unit_id: unit.id, returned_at: status === 'valid' ? null : new Date() })
  const number = `T-${tag}-${key}`.slice(0, 40)
  await db('certificates').insert({
    number, verify_code: randomBytes(16).toString('hex').toUpperCase(), unit_id: unit.id, shipment_id: shipmentId, customer_id: customerId, status,
    template_version: 1, snapshot: '{}', issued_at: new Date(), issued_by: quality.id, render_lease_owner: 'test', render_lease_until: new Date(Date.now() + HOUR),
  })
  certs[key] = number
}

const detail = async (query = '') => {
  const r = await call('GET', `/api/calibration-impacts/${impactId}${query}`, { cookie: quality })
  expect(r.status, JSON.stringify(r.body)).toBe(200)
  return r.body
}
const decide = (body: unknown, cookie = quality) => call('POST', `/api/calibration-impacts/${impactId}/decisions`, { cookie, body })
const outboxRows = (ids: number[]) => db('mail_outbox').whereIn('id', ids).orderBy('id')
/** JSON columns come back parsed or as text, depending on the column type */
const json = (v: any) => (typeof v === 'string' ? JSON.parse(v) : v)

beforeAll(async () => {
  db = createKnex(connectionFromEnv(), { min: 0, max: 2 })
  engineer = await signIn(ROLE_ACCOUNTS.engineer)
  quality = await signIn(ROLE_ACCOUNTS.quality)
  admin = await signIn(ROLE_ACCOUNTS.admin)
  const a = await instrument(assets.a)
  const b = await instrument(assets.b)
  await calibrate(a, 'in_tolerance', 9, 'A1')
  await calibrate(a, 'in_tolerance', 6, 'A2')
  await calibrate(b, 'in_tolerance', 9, 'B1')
  await run('BEFORE', lotA, new Date(dayStart(6).getTime() - 1), assets.a)
  await run('FROM-EDGE', lotA, dayStart(6), assets.a)
  await run('MID', lotA, new Date(dayStart(7).getTime() + HOUR), assets.a)
  await run('MID', lotA, dayStart(5), assets.a)
  await run('MID', lotA, dayStart(4), assets.a)
  await run('REVOKED', lotA, dayStart(5), assets.a)
  await run('TO-EDGE', lotA, dayStart(2), assets.a)
  await run('LAST-MS', lotB, new Date(dayStart(2).getTime() - 1), assets.a)
  await run('AFTER', lotA, dayStart(1), assets.a)
  await run('OTHER', lotA, dayStart(4), assets.b)
  await run('B1', lotB, dayStart(3), assets.a)
  await run('B2', lotB, new Date(dayStart(3).getTime() + HOUR), assets.a)

  const x = await customer('X', [{ who: 'xena', receives: true }, { who: 'xavier', receives: true }, { who: 'xquiet', receives: false }])
  const y = await customer('Y', [{ who: 'yara', receives: true }])
  const z = await customer('Z', [{ who: 'zeno', receives: true }])
  await certificate('FROM-EDGE', x, 'valid')
  await certificate('B1', x, 'valid')
  await certificate('REVOKED', x, 'revoked')
  await certificate('MID', y, 'superseded', 'MID-OLD')
  await certificate('MID', y, 'valid')
  await certificate('BEFORE', z, 'valid')
  await certificate('TO-EDGE', z, 'valid')
  await certificate('OTHER', z, 'valid')

  const found = await calibrate(a, 'out_of_tolerance', 2, 'A3')
  expect(found.impactId).toEqual(expect.any(Number))
  impactId = found.impactId!
}, 120_000)
afterAll(async () => { await db.destroy() })

describe('the review of an out-of-tolerance finding', () => {
  it('opens with the record, in its transaction, and is listed', async () => {
    const opened = await db('audit_log').where({ entity: 'calibration_impact', entity_id: String(impactId), action: 'calibration_impact_open' })
    expect(opened).toHaveLength(1)
    const list = await call('GET', '/api/calibration-impacts', { cookie: engineer })
    expect(list.status).toBe(200)
    expect(list.body.impacts.find((i: any) => i.id === impactId)).toMatchObject({ status: 'open', instrument: { assetNumber: assets.a }, counts: { units: 6, runs: 7, lots: 2, certificates: 3 }, decided: 0 })
  })

  it('traces exactly the runs since the last in-tolerance calibration: from it inclusive, up to the finding exclusive, this instrument only', async () => {
    const d = await detail()
    expect(d.window).toEqual({ from: dayStart(6).toISOString(), to: dayStart(2).toISOString(), basis: { kind: 'in_tolerance', recordId: expect.any(Number), certificateNumber: `CAL-${tag}-A2` } })
    expect(d.record).toMatchObject({ certificateNumber: `CAL-${tag}-A3`, calibratedOn: dayStart(2).toISOString() })
    expect(d.units.items.map((u: any) => [u.lot, u.serial, u.runs])).toEqual([
      [lotA, serial('FROM-EDGE'), 1], [lotA, serial('MID'), 2], [lotA, serial('REVOKED'), 1],
      [lotB, serial('B1'), 1], [lotB, serial('B2'), 1], [lotB, serial('LAST-MS'), 1],
    ])
    expect(d.lots).toEqual([
      { code: lotA, partNumber: 'VFW-T3-375', units: 3, runs: 4, decided: 0 },
      { code: lotB, partNumber: 'VFW-T3-375', units: 3, runs: 3, decided: 0 },
    ])
    expect(d.counts).toEqual({ units: 6, runs: 7, lots: 2, certificates: 3 })
    const mid = d.units.items.find((u: any) => u.serial === serial('MID'))
    expect(mid.certificates.map((c: any) => [c.number, c.status, c.customer.id])).toEqual(expect.arrayContaining([[certs.MID, 'valid', customers.Y], [certs['MID-OLD'], 'superseded', customers.Y]]))
    // only the final step was tested, so the unit's standing is incomplete
    expect(mid).toMatchObject({ latestVerdict: null, decision: null, firstRunAt: dayStart(5).toISOString(), lastRunAt: dayStart(4).toISOString() })
    // customers holding valid certificates of these units; Z's certificates are all outside the window
    expect(d.customers.map((c: any) => [c.id, c.units, c.certificates, c.contacts])).toEqual([[customers.X, 2, 2, 2], [customers.Y, 1, 1, 1]])
    const paged = await detail(`?lot=${lotB}&pageSize=2&page=2`)
    expect(paged.units).toMatchObject({ total: 3, page: 2, pageSize: 2, items: [{ serial: serial('LAST-MS') }] })
  })

  it('refuses a bad batch of decisions whole, with a pointer at each fault', async () => {
    const bad = await decide({ decisions: [
      { partNumber: 'VFW-T3-375', serial: serial('FROM-EDGE'), decision: 'no_impact' },
      { partNumber: 'VFW-T3-375', serial: serial('MID'), decision: 'retest', reason: '  ' },
      { partNumber: 'VFW-T3-375', serial: serial('BEFORE'), decision: 'no_impact' },
    ] })
    expect(bad.status).toBe(422)
    expect(bad.body.errors).toEqual([
      { pointer: '/decisions/1/reason', message: expect.stringContaining('reason') },
      { pointer: '/decisions/2/serial', message: expect.stringContaining('not measured') },
    ])
    expect((await decide({ decisions: [{ partNumber: 'VFW-T3-375', serial: serial('MID'), decision: 'scrap' }] })).status).toBe(400)
    expect((await decide({ lot: `${tag}-NONE`, decision: 'no_impact' })).body.errors).toEqual([{ pointer: '/lot', message: expect.any(String) }])
    expect((await decide({ decisions: [{ partNumber: 'VFW-T3-375', serial: serial('MID'), decision: 'no_impact' }] }, engineer)).status).toBe(403)
    expect((await detail()).decided.total).toBe(0)
  })

  it('records decisions for units and whole lots, audits each change with before and after, and will not notify before every certified unit is decided', async () => {
    const first = await decide({ decisions: [
      { partNumber: 'VFW-T3-375', serial: serial('FROM-EDGE'), decision: 'no_impact', reason: 'Error well inside the guard band' },
      { partNumber: 'VFW-T3-375', serial: serial('MID'), decision: 'retest', reason: 'Phase noise margin below the analyser error' },
    ] })
    expect(first.status, JSON.stringify(first.body)).toBe(200)
    expect(first.body).toEqual({ changed: 2, unchanged: 0, decided: 2, units: 6 })

    const early = await call('POST', `/api/calibration-impacts/${impactId}/notices`, { cookie: quality, body: {} })
    expect(early.status).toBe(409)
    expect(early.body.undecided).toEqual([{ customer: expect.any(String), partNumber: 'VFW-T3-375', serial: serial('B1') }])
    expect(await db('calibration_impact_notices').where({ impact_id: impactId })).toHaveLength(0)

    const lot = await decide({ lot: lotB, decision: 'recall', reason: 'Margins within the analyser error' })
    expect(lot.body).toEqual({ changed: 3, unchanged: 0, decided: 5, units: 6 })
    const again = await decide({ decisions: [{ partNumber: 'VFW-T3-375', serial: serial('FROM-EDGE'), decision: 'no_impact', reason: 'Error well inside the guard band' }] })
    expect(again.body).toMatchObject({ changed: 0, unchanged: 1 })

    const audit = await db('audit_log').where({ entity: 'calibration_impact', entity_id: String(impactId), action: 'calibration_impact_decide' }).orderBy('id')
    expect(audit).toHaveLength(2)
    expect(json(audit[1].after)).toEqual([serial('B1'), serial('B2'), serial('LAST-MS')].map((s) => ({ unit: `VFW-T3-375/${s}`, decision: 'recall', reason: 'Margins within the analyser error' })))
    expect(json(audit[1].before)[0]).toEqual({ unit: `VFW-T3-375/${serial('B1')}`, decision: null, reason: null })

    const d = await detail()
    expect(d.decided).toEqual({ total: 5, no_impact: 1, retest: 1, recall: 3 })
    expect(d.units.items.find((u: any) => u.serial === serial('MID')).decision).toMatchObject({ decision: 'retest', reason: 'Phase noise margin below the analyser error', decidedBy: expect.any(String) })
  })

  it('tells each affected customer\'s certificate contacts about their own serials and valid certificates, once, and again only on purpose', async () => {
    const sent = await call('POST', `/api/calibration-impacts/${impactId}/notices`, { cookie: quality, body: {} })
    expect(sent.status, JSON.stringify(sent.body)).toBe(200)
    expect(sent.body.skipped).toEqual([])
    expect(sent.body.sent.map((s: any) => [s.units, s.recipients]).sort()).toEqual([[1, 1], [2, 2]])
    const rows = await outboxRows(sent.body.sent.map((s: any) => s.mailId))
    const toX = rows.find((r: any) => json(r.to).includes(mail('xena')))
    const toY = rows.find((r: any) => json(r.to).includes(mail('yara')))
    expect(json(toX.to).sort()).toEqual([mail('xavier'), mail('xena')])
    expect(json(toY.to)).toEqual([mail('yara')])
    expect(toX.template).toBe('calibrationImpact')
    for (const part of [toX.text, toX.html]) {
      for (const s of [serial('FROM-EDGE'), serial('B1'), certs['FROM-EDGE']!, certs.B1!]) expect(part).toContain(s)
      // the revoked certificate and other customers' units are not named
      for (const s of [serial('REVOKED'), certs.REVOKED!, serial('MID'), serial('BEFORE'), serial('TO-EDGE')]) expect(part).not.toContain(s)
      expect(part).toContain('acceptance rules')
    }
    expect(toX.text).toMatch(new RegExp(`${serial('B1')} — certificate ${certs.B1} — we ask you to return this unit`))
    expect(toY.text).toContain(certs.MID)
    expect(toY.text).not.toContain(certs['MID-OLD'])
    expect(toY.text).toContain('we will test this unit again (Phase noise margin below the analyser error)')
    // no customer without an affected certificate hears anything
    const toZ = await db('mail_outbox').where('to', 'like', `%${mail('zeno')}%`)
    expect(toZ).toHaveLength(0)
    const audit = await db('audit_log').where({ entity: 'calibration_impact', entity_id: String(impactId), action: 'calibration_impact_notify' })
    expect(audit).toHaveLength(1)
    expect(json(audit[0].after).signed).toMatchObject({ method: 'recent-sign-in' })

    const twice = await call('POST', `/api/calibration-impacts/${impactId}/notices`, { cookie: quality, body: {} })
    expect(twice.body).toEqual({ sent: [], skipped: [{ customer: expect.any(String), reason: 'already_noticed' }, { customer: expect.any(String), reason: 'already_noticed' }] })

    // a changed decision makes that customer's notice due again, and only that one
    await decide({ decisions: [{ partNumber: 'VFW-T3-375', serial: serial('FROM-EDGE'), decision: 'retest', reason: 'Second look at the margins' }] })
    expect((await detail()).customers.map((c: any) => c.noticeDue).sort()).toEqual([false, true])
    const changed = await call('POST', `/api/calibration-impacts/${impactId}/notices`, { cookie: quality, body: {} })
    expect(changed.body.sent).toEqual([expect.objectContaining({ units: 2, recipients: 2 })])
    const resent = await call('POST', `/api/calibration-impacts/${impactId}/notices`, { cookie: quality, body: { resend: true } })
    expect(resent.body.sent).toHaveLength(2)
    expect(await db('calibration_impact_notices').where({ impact_id: impactId })).toHaveLength(5)
  })

  it('delivers the notice over SMTP to the local catcher', async () => {
    const deadline = Date.now() + 30_000
    let hit: any
    while (!hit && Date.now() < deadline) {
      const r = await call('GET', '/api/admin/outbox/received', { cookie: admin })
      hit = r.body.messages.find((m: any) => m.to.includes(mail('yara')))
      if (!hit) await new Promise((ok) => setTimeout(ok, 250))
    }
    expect(hit).toBeDefined()
    expect(hit.text).toContain(certs.MID)
    expect(hit.subject).toContain('Calibration finding on 1 unit')
  })

  it('closes only when every unit is decided, and then takes no more decisions', async () => {
    const early = await call('POST', `/api/calibration-impacts/${impactId}/close`, { cookie: quality, body: {} })
    expect(early.status).toBe(409)
    expect(early.body.undecided).toEqual([{ partNumber: 'VFW-T3-375', serial: serial('REVOKED') }])
    expect((await decide({ decisions: [{ partNumber: 'VFW-T3-375', serial: serial('REVOKED'), decision: 'no_impact' }] })).status).toBe(200)
    const closed = await call('POST', `/api/calibration-impacts/${impactId}/close`, { cookie: admin, body: {} })
    expect(closed.status, JSON.stringify(closed.body)).toBe(200)
    expect((await detail()).status).toBe('closed')
    expect((await decide({ decisions: [{ partNumber: 'VFW-T3-375', serial: serial('REVOKED'), decision: 'recall', reason: 'x' }] })).status).toBe(409)
    expect(await db('audit_log').where({ entity: 'calibration_impact', entity_id: String(impactId), action: 'calibration_impact_close' })).toHaveLength(1)
  })

  it('opens on first view for a record entered without one, and the station page links each finding to its review', async () => {
    const instrumentId = (await db('instruments').where({ asset_number: assets.b }).first('id')).id
    const [recordId] = await db('calibration_records').insert({ instrument_id: instrumentId, certificate_number: `CAL-${tag}-B2`, as_found: 'out_of_tolerance', calibrated_on: dayStart(1), due_at: dayStart(-300) })
    expect(await db('calibration_impacts').where({ record_id: recordId })).toHaveLength(0)
    const list = await call('GET', '/api/calibration-impacts', { cookie: engineer })
    const opened = list.body.impacts.find((i: any) => i.record.id === recordId)
    // B measured OTHER at dayStart(4), after its in-tolerance calibration at dayStart(9)
    expect(opened).toMatchObject({ status: 'open', window: { from: dayStart(9).toISOString(), to: dayStart(1).toISOString() }, counts: { units: 1, runs: 1, certificates: 1 } })
    expect((await call('GET', '/api/calibration-impacts', { cookie: engineer })).body.impacts.filter((i: any) => i.record.id === recordId)).toHaveLength(1)

    const stations = await call('GET', '/api/stations', { cookie: engineer })
    const d2 = stations.body.stations.find((s: any) => s.name === 'ATE-D2-01')
    const view = await call('GET', `/api/stations/${d2.id}/calibration`, { cookie: engineer })
    const records = view.body.current.flatMap((i: any) => i.records)
    expect(records.find((r: any) => r.certificateNumber === 'BML-26-0093').impactId).toEqual(expect.any(Number))
    expect(records.filter((r: any) => r.asFound === 'in_tolerance').every((r: any) => r.impactId === null)).toBe(true)
  })

  it('closes a review as it opens when nothing was measured with the instrument in its window', async () => {
    const quiet = await instrument(`IMP-${tag}-Q`.slice(0, 32))
    await calibrate(quiet, 'in_tolerance', 9, 'Q1')
    const found = await calibrate(quiet, 'out_of_tolerance', 2, 'Q2')
    const detail = await call('GET', `/api/calibration-impacts/${found.impactId}`, { cookie: quality })
    expect(detail.body).toMatchObject({ status: 'closed', closed: { by: null }, counts: { runs: 0, units: 0, certificates: 0 } })
    const audit = await db('audit_log').where({ entity: 'calibration_impact', entity_id: String(found.impactId) }).orderBy('id').pluck('action')
    expect(audit).toEqual(['calibration_impact_open', 'calibration_impact_close'])
    expect((await call('POST', `/api/calibration-impacts/${found.impactId}/close`, { cookie: quality })).status).toBe(409)
  })

  it('answers 404 for a review that does not exist', async () => {
    expect((await call('GET', '/api/calibration-impacts/999999', { cookie: quality })).status).toBe(404)
  })
})

import { beforeAll, describe, expect, it } from 'vitest'
import { baseUrl, call, signIn, ROLE_ACCOUNTS } from '../support/http'
import { stationTokens, tripleRun } from '../support/stations'
import { pdfWithText } from '../support/pdf'

const DAY = 86_400_000
const tag = `${Date.now().toString(36)}${process.pid.toString(36)}`.toUpperCase()
let engineer = ''
let admin = ''
let seq = 0
const asset = () => `E2E-${tag}-${++seq}`.slice(0, 32)
const ago = (days: number) => new Date(Date.now() - days * DAY).toISOString()

const pdf = () => pdfWithText(`Certificate of calibration ${tag}`)

async function newStation() {
  const r = await call('POST', '/api/stations', { cookie: engineer, body: { name: `E2E-CAL-${tag}-${++seq}` } })
  expect(r.status).toBe(201)
  return r.body as { station: { id: number; name: string }; token: string }
}

async function newInstrument(stationId?: number) {
  const body = { assetNumber: asset(), kind: 'Power sensor', model: 'PS-18', serial: `S-${seq}`, ...(stationId ? { stationId, installedAt: ago(20) } : {}) }
  const r = await call('POST', '/api/instruments', { cookie: engineer, body })
  expect(r.status, JSON.stringify(r.body)).toBe(201)
  return r.body.instrument as { id: number; assetNumber: string }
}

const record = (extra: Record<string, unknown> = {}) => ({
  certificateNumber: `CERT-${tag}-${++seq}`, laboratory: 'Invented Metrology Lab', asFound: 'in_tolerance', calibratedOn: ago(30).slice(0, 10), dueAt: ago(-300).slice(0, 10), ...extra,
})

const counts = async (instrumentId: number) => {
  const cal = await call('GET', '/api/instruments', { cookie: engineer })
  const audit = await call('GET', `/api/audit?entity=instrument&entityId=${instrumentId}`, { cookie: admin })
  return { listed: cal.body.instruments.length, audit: audit.body.total }
}

beforeAll(async () => {
  engineer = await signIn(ROLE_ACCOUNTS.engineer)
  admin = await signIn(ROLE_ACCOUNTS.admin)
})

describe('instruments, calibration records and the runs under them', () => {
  it('a run taken with an uncalibrated instrument is flagged until its calibration is recorded; the unit page names the certificate', async () => {
    const { station, token } = await newStation()
    const instrument = await newInstrument(station.id)
    const run = tripleRun({ lot: `CAL-E2E-${tag}`.slice(0, 32), startedAt: ago(2), finishedAt: ago(2 - 0.001) })
    const posted = await call('POST', '/api/v1/runs', { token, body: run })
    expect(posted.status).toBe(201)
    expect(posted.body.calibrationLapsed).toBe(true)

    const document = await pdf()
    const added = await call('POST', `/api/instruments/${instrument.id}/calibrations`, { cookie: engineer, body: record({ certificateNumber: `CERT-${tag}-A`, certificatePdf: document.toString('base64'), certificateFileName: 'cert.pdf' }) })
    expect(added.status, JSON.stringify(added.body)).toBe(201)
    expect(added.body.record.rejudged).toMatchObject({ runs: 1, nowInCalibration: 1, nowLapsed: 0 })

    const unit = await call('GET', `/api/units/${run.serial}`, { cookie: await signIn(ROLE_ACCOUNTS.operator) })
    expect(unit.body.runs[0].calibrationLapsed).toBe(false)
    expect(unit.body.runs[0].instruments).toEqual([{
      assetNumber: instrument.assetNumber, kind: 'Power sensor', model: 'PS-18', serial: expect.any(String), named: false, pastDue: false,
      calibration: { certificateNumber: `CERT-${tag}-A`, laboratory: 'Invented Metrology Lab', calibratedOn: expect.any(String), dueAt: `${ago(-300).slice(0, 10)}T00:00:00.000Z` },
    }])

    const view = await call('GET', `/api/stations/${station.id}/calibration`, { cookie: engineer })
    expect(view.status).toBe(200)
    const [current] = view.body.current
    expect(current).toMatchObject({ assetNumber: instrument.assetNumber, state: 'ok', currentStation: { id: station.id } })
    expect(current.holdings).toEqual([expect.objectContaining({ stationId: station.id, until: null })])
    expect(current.records[0]).toMatchObject({ certificateNumber: `CERT-${tag}-A`, inForceNow: true, runs: { count: 1, pastDue: 0, latest: [expect.objectContaining({ serial: run.serial })] } })

    const file = await fetch(baseUrl() + current.records[0].certificate.href, { headers: { cookie: engineer } })
    expect(file.status).toBe(200)
    expect(file.headers.get('content-type')).toBe('application/pdf')
    expect(Buffer.from(await file.arrayBuffer()).equals(document)).toBe(true)
  })

  it('superseding, moving and removing are audited and judged again; the station list follows', async () => {
    const { station } = await newStation()
    const other = await newStation()
    const instrument = await newInstrument(station.id)
    const added = await call('POST', `/api/instruments/${instrument.id}/calibrations`, { cookie: engineer, body: record() })
    const sup = await call('POST', `/api/calibrations/${added.body.record.id}/supersede`, { cookie: admin, body: { reason: 'Certificate withdrawn by the laboratory' } })
    expect(sup.status).toBe(200)
    expect((await call('POST', `/api/calibrations/${added.body.record.id}/supersede`, { cookie: admin, body: { reason: 'again' } })).status).toBe(409)
    const listed = (await call('GET', '/api/stations', { cookie: engineer })).body.stations.find((s: any) => s.id === station.id)
    expect(listed).toMatchObject({ calibrationState: 'lapsed', instruments: [expect.objectContaining({ assetNumber: instrument.assetNumber, calibrationDue: null, state: 'lapsed' })] })

    expect((await call('POST', `/api/instruments/${instrument.id}/moves`, { cookie: engineer, body: { stationId: other.station.id } })).status).toBe(200)
    expect((await call('GET', `/api/stations/${station.id}/calibration`, { cookie: engineer })).body).toMatchObject({ current: [], former: [expect.objectContaining({ assetNumber: instrument.assetNumber, currentStation: { id: other.station.id, name: other.station.name } })] })
    expect((await call('POST', `/api/instruments/${instrument.id}/moves`, { cookie: engineer, body: { stationId: null } })).status).toBe(200)
    const audit = await call('GET', `/api/audit?entity=instrument&entityId=${instrument.id}`, { cookie: admin })
    expect(audit.body.entries.map((e: any) => e.action)).toEqual(['instrument_move', 'instrument_move', 'calibration_supersede', 'calibration_add', 'instrument_add'])
  })
})

describe('refusals', () => {
  it('malformed bodies are 400 problem+json with a pointer per field', async () => {
    const r = await call('POST', '/api/instruments', { cookie: engineer, body: { assetNumber: 'has space', model: 'PS-18', serial: 'x', colour: 'red' } })
    expect(r.status).toBe(400)
    expect(r.headers.get('content-type')).toContain('application/problem+json')
    expect(r.body.errors.map((e: any) => e.pointer).sort()).toEqual(['/assetNumber', '/colour', '/kind'])

    const instrument = await newInstrument()
    const bad = await call('POST', `/api/instruments/${instrument.id}/calibrations`, { cookie: engineer, body: { ...record(), dueAt: '2027-02-30', asFound: 'fine', laboratory: '' } })
    expect(bad.status).toBe(400)
    const byPointer = Object.fromEntries(bad.body.errors.map((e: any) => [e.pointer, e.message]))
    expect(Object.keys(byPointer).sort()).toEqual(['/asFound', '/dueAt', '/laboratory'])
    expect(byPointer['/dueAt']).toMatch(/date/)

    const order = await call('POST', `/api/instruments/${instrument.id}/calibrations`, { cookie: engineer, body: record({ dueAt: ago(30).slice(0, 10) }) })
    expect(order.status).toBe(422)
    expect(order.body.errors).toEqual([expect.objectContaining({ pointer: '/dueAt' })])
    const future = await call('POST', `/api/instruments/${instrument.id}/calibrations`, { cookie: engineer, body: record({ calibratedOn: ago(-3).slice(0, 10) }) })
    expect(future.status).toBe(422)
    expect(future.body.errors).toEqual([expect.objectContaining({ pointer: '/calibratedOn' })])

    const dup = await call('POST', '/api/instruments', { cookie: engineer, body: { assetNumber: instrument.assetNumber, kind: 'Power sensor', model: 'PS-18', serial: 'again' } })
    expect(dup.status).toBe(409)
    expect(dup.body.errors).toEqual([expect.objectContaining({ pointer: '/assetNumber' })])

    const nowhere = await call('POST', `/api/instruments/${instrument.id}/moves`, { cookie: engineer, body: { stationId: 99_999_999 } })
    expect(nowhere.status).toBe(422)
    expect(nowhere.body.errors).toEqual([expect.objectContaining({ pointer: '/stationId' })])
    expect((await call('POST', '/api/instruments/99999999/moves', { cookie: engineer, body: { stationId: null } })).status).toBe(404)
    expect((await call('PATCH', `/api/instruments/${instrument.id}/holdings/99999999`, { cookie: engineer, body: { from: ago(3), until: null } })).status).toBe(404)
    expect((await call('GET', '/api/calibrations/99999999/certificate', { cookie: engineer })).status).toBe(404)
  })

  it('a document that is not a PDF, or larger than 5 MiB, is refused and leaves nothing behind', async () => {
    const instrument = await newInstrument()
    const before = await counts(instrument.id)
    const png = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, 1, 2, 3, 4])
    const notPdf = await call('POST', `/api/instruments/${instrument.id}/calibrations`, { cookie: engineer, body: record({ certificatePdf: png.toString('base64'), certificateFileName: 'scan.pdf' }) })
    expect(notPdf.status).toBe(422)
    expect(notPdf.headers.get('content-type')).toContain('application/problem+json')
    expect(notPdf.body.errors).toEqual([{ pointer: '/certificatePdf', message: expect.stringMatching(/not a PDF/) }])

    const big = Buffer.alloc(5 * 1024 * 1024 + 1, 0x20)
    big.write('%PDF-1.7\n', 0, 'latin1')
    big.write('%%EOF\n', big.length - 6, 'latin1')
    const tooBig = await call('POST', `/api/instruments/${instrument.id}/calibrations`, { cookie: engineer, body: record({ certificatePdf: big.toString('base64') }) })
    expect(tooBig.status).toBe(413)
    expect(tooBig.body.errors).toEqual([{ pointer: '/certificatePdf', message: expect.stringMatching(/5 MiB/) }])

    const view = await call('GET', '/api/instruments', { cookie: engineer })
    expect(view.body.instruments.find((i: any) => i.id === instrument.id)).toBeDefined()
    expect(await counts(instrument.id)).toEqual(before)
    const records = await call('GET', `/api/audit?entity=instrument&entityId=${instrument.id}`, { cookie: admin })
    expect(records.body.entries.map((e: any) => e.action)).toEqual(['instrument_add'])
  })

  it('a station naming an unknown asset gets a 422 pointing at it', async () => {
    const r = await call('POST', '/api/v1/runs', { token: stationTokens()['ATE-T3-01']!, body: tripleRun({ instrumentAssets: ['VFW-SA-0422', `NO-${tag}`] }) })
    expect(r.status).toBe(422)
    expect(r.body.errors).toEqual([{ pointer: '/instrumentAssets/1', message: 'no instrument has this asset number' }])
    const bad = await call('POST', '/api/v1/runs', { token: stationTokens()['ATE-T3-01']!, body: tripleRun({ instrumentAssets: [] }) })
    expect(bad.status).toBe(400)
    expect(bad.body.errors[0].pointer).toBe('/instrumentAssets')
  })
})

describe('who may change the history', () => {
  it('quality engineers, operators and customers are refused every instrument route and write nothing', async () => {
    const instrument = await newInstrument()
    const before = await counts(instrument.id)
    for (const who of ['quality', 'operator', 'customer'] as const) {
      const cookie = await signIn(ROLE_ACCOUNTS[who])
      expect((await call('GET', '/api/instruments', { cookie })).status).toBe(403)
      expect((await call('POST', '/api/instruments', { cookie, body: { assetNumber: asset(), kind: 'k', model: 'm', serial: 's' } })).status).toBe(403)
      expect((await call('POST', `/api/instruments/${instrument.id}/calibrations`, { cookie, body: record() })).status).toBe(403)
      expect((await call('POST', `/api/instruments/${instrument.id}/moves`, { cookie, body: { stationId: null } })).status).toBe(403)
      expect((await call('GET', '/api/stations/1/calibration', { cookie })).status).toBe(403)
    }
    expect(await counts(instrument.id)).toEqual(before)
    // admins and engineers may
    const byAdmin = await call('POST', `/api/instruments/${instrument.id}/calibrations`, { cookie: admin, body: record() })
    expect(byAdmin.status).toBe(201)
  })
})

// Uploads other than run imports: a shipment's serial list, a calibration certificate and a limit table are each
// checked by size (413), declared type (415) and content (422), and a client's file name is kept only as a name.
import type { Knex } from 'knex'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { connectionFromEnv, createKnex } from '../../server/database/connection'
import { baseUrl, call, postDeclaredOnly, signIn, ROLE_ACCOUNTS } from '../support/http'
import { firstCustomerId } from '../support/shipping'
import { pdfWithText } from '../support/pdf'

const tag = `${Date.now().toString(36)}${process.pid.toString(36)}`.toUpperCase()
let db: Knex
let quality = ''
let engineer = ''
let shipmentId = 0

beforeAll(async () => {
  db = createKnex(connectionFromEnv(), { min: 0, max: 2 })
  quality = await signIn(ROLE_ACCOUNTS.quality)
  engineer = await signIn(ROLE_ACCOUNTS.engineer)
  const made = await call('POST', '/api/shipments', { cookie: quality, body: { customerId: await firstCustomerId(quality, 'QUILL') } })
  expect(made.status).toBe(201)
  shipmentId = made.body.shipment.id
})

afterAll(async () => {
  await db.destroy()
})

async function send(path: string, cookie: string, body: string, type: string) {
  const r = await fetch(baseUrl() + path, { method: 'POST', headers: { cookie, 'content-type': type, accept: 'application/json' }, body })
  return { status: r.status, type: r.headers.get('content-type'), body: await r.json() as any }
}

const declaredOnly = (path: string, cookie: string, length: number, type: string) => postDeclaredOnly(path, length, { cookie, 'content-type': type }, '{"lines":["')

describe('a shipment serial list', () => {
  const preview = () => `/api/shipments/${shipmentId}/serials/preview`

  it('is read as JSON only: 415 for another declared type', async () => {
    const r = await send(preview(), quality, 'SN-1\nSN-2\n', 'text/plain')
    expect(r.status).toBe(415)
    expect(r.type).toContain('application/problem+json')
  })

  it('answers 413 for a body declared beyond 4 MiB, before reading it', async () => {
    const r = await declaredOnly(preview(), quality, 5 * 1024 * 1024, 'application/json')
    expect(r.status).toBe(413)
    expect(r.body.status).toBe(413)
  })

  it('refuses with 422 a list holding NUL, control characters or undecodable bytes, naming each line', async () => {
    const r = await call('POST', preview(), { cookie: quality, body: { lines: ['SN-1', 'SN\u00002', 'SN-3', '\ufffd\ufffdPNG', 'SN\u001b[2J'] } })
    expect(r.status).toBe(422)
    expect(r.body.errors).toEqual([
      { pointer: '/lines/1', message: 'line 2 holds a NUL byte' },
      { pointer: '/lines/3', message: 'line 4 holds bytes that are not UTF-8 text' },
      { pointer: '/lines/4', message: 'line 5 holds a control character' },
    ])
    expect((await call('GET', `/api/shipments/${shipmentId}`, { cookie: quality })).body.shipment.units).toBe(0)
  })

  it('refuses with 422 a PDF read as a list, and the same holds when adding', async () => {
    const lines = ['%PDF-1.7', '1 0 obj', '<< /Type /Catalog >>']
    const r = await call('POST', preview(), { cookie: quality, body: { lines } })
    expect(r.status).toBe(422)
    expect(r.body).toMatchObject({ detectedKind: 'a PDF document', errors: [{ pointer: '/lines/0' }] })
    expect((await call('POST', `/api/shipments/${shipmentId}/serials`, { cookie: quality, body: { lines } })).status).toBe(422)
  })

  it('still checks a plain list row by row', async () => {
    const r = await call('POST', preview(), { cookie: quality, body: { lines: ['serial', `NO-SUCH-${tag}`, ''] } })
    expect(r.status).toBe(200)
    expect(r.body.rows.map((x: any) => x.verdict)).toEqual(['unknown_serial'])
  })
})

const pdf = () => pdfWithText(`Certificate of calibration ${tag}`)

describe('a calibration certificate', () => {
  let instrumentId = 0
  let seq = 0
  const record = (extra: Record<string, unknown> = {}) => ({
    certificateNumber: `UPL-${tag}-${++seq}`, laboratory: 'Invented Metrology Lab', asFound: 'in_tolerance',
    calibratedOn: new Date(Date.now() - 30 * 86_400_000).toISOString().slice(0, 10), dueAt: new Date(Date.now() + 300 * 86_400_000).toISOString().slice(0, 10), ...extra,
  })
  const path = () => `/api/instruments/${instrumentId}/calibrations`

  beforeAll(async () => {
    const r = await call('POST', '/api/instruments', { cookie: engineer, body: { assetNumber: `UPL-${tag}`.slice(0, 32), kind: 'Power sensor', model: 'PS-18', serial: 'S-1' } })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    instrumentId = r.body.instrument.id
  })

  it('is refused with 415 unless the body is declared JSON', async () => {
    const r = await send(path(), engineer, JSON.stringify(record()), 'text/plain')
    expect(r.status).toBe(415)
    expect(await db('calibration_records').where({ certificate_number: `UPL-${tag}-${seq}` }).first()).toBeUndefined()
  })

  it('answers 413 for a body declared beyond 8 MiB, before reading it', async () => {
    const r = await declaredOnly(path(), engineer, 9 * 1024 * 1024, 'application/json')
    expect(r.status).toBe(413)
  })

  it('keeps the document\'s file name only as a name to show: its last segment, without control or direction characters', async () => {
    const document = await pdf()
    const r = await call('POST', path(), { cookie: engineer, body: record({ certificatePdf: document.toString('base64'), certificateFileName: '..\\..\\windows\\cert_\u202efdp.exe\u0007' }) })
    expect(r.status, JSON.stringify(r.body)).toBe(201)
    const stored = await db('calibration_certificates').where({ record_id: r.body.record.id }).first('file_name')
    expect(stored.file_name).toBe('cert_fdp.exe')
    const download = await fetch(`${baseUrl()}/api/calibrations/${r.body.record.id}/certificate`, { headers: { cookie: engineer } })
    expect(download.headers.get('content-disposition')).toBe(`attachment; filename="UPL-${tag}-${seq}.pdf"`)
    expect(Buffer.from(await download.arrayBuffer()).equals(document)).toBe(true)
  })
})

describe('a limit table', () => {
  it('is refused with 422 when it is a workbook, holds NUL bytes or is not UTF-8, before the revision is read', async () => {
    const path = '/api/revisions/999999999/limits/import?preview=1'
    const zip = Buffer.from([0x50, 0x4b, 0x03, 0x04, 0x14, 0x00, 0x06, 0x00, 0x08, 0x00])
    const asWorkbook = await fetch(baseUrl() + path, { method: 'POST', headers: { cookie: engineer, 'content-type': 'text/csv', accept: 'application/json' }, body: zip })
    expect(asWorkbook.status).toBe(422)
    expect((await asWorkbook.json() as any).detectedKind).toMatch(/ZIP/)
    const latin1 = Buffer.from('step,name,usl,unit\nfinal,Leistung Ü,9,dBm\n', 'latin1')
    const notUtf8 = await fetch(baseUrl() + path, { method: 'POST', headers: { cookie: engineer, 'content-type': 'text/csv' }, body: latin1 })
    expect(notUtf8.status).toBe(422)
    const nul = await fetch(baseUrl() + path, { method: 'POST', headers: { cookie: engineer, 'content-type': 'text/csv' }, body: 'step,name\u0000,usl\n' })
    expect(nul.status).toBe(422)
  })
})

import { beforeAll, describe, expect, it } from 'vitest'
import { call, signIn, ROLE_ACCOUNTS } from '../support/http'
import { firstCustomerId } from '../support/shipping'

let quality = ''
let operator = ''
let customer = ''
let quill = 0

beforeAll(async () => {
  quality = await signIn(ROLE_ACCOUNTS.quality)
  operator = await signIn(ROLE_ACCOUNTS.operator)
  customer = await signIn(ROLE_ACCOUNTS.customer)
  quill = await firstCustomerId(quality, 'QUILL')
})

describe('shipment drafts and who reads them', () => {
  it('quality creates a draft; staff read it; the customer sees neither it in the list nor by id (404)', async () => {
    const created = await call('POST', '/api/shipments', { cookie: quality, body: { customerId: quill, customerPo: ' PO-7781 ', plannedShipDate: '2026-12-20', notes: 'Ship with the December batch' } })
    expect(created.status, JSON.stringify(created.body)).toBe(201)
    const s = created.body.shipment
    expect(s).toMatchObject({ status: 'draft', customerPo: 'PO-7781', plannedShipDate: '2026-12-20', units: 0, customer: { id: quill, code: 'QUILL' }, createdBy: 'Rosa Fenwright' })
    expect(s.code).toMatch(/^SHP-\d{4}-\d{5}$/)

    const list = await call('GET', `/api/shipments?status=draft&q=PO-7781`, { cookie: operator })
    expect(list.status).toBe(200)
    expect(list.body.shipments.map((x: any) => x.id)).toContain(s.id)
    expect((await call('GET', `/api/shipments/${s.id}`, { cookie: operator })).body.shipment.notes).toBe('Ship with the December batch')

    const theirs = await call('GET', '/api/shipments?status=draft', { cookie: customer })
    expect(theirs.body.shipments.map((x: any) => x.id)).not.toContain(s.id)
    const byId = await call('GET', `/api/shipments/${s.id}`, { cookie: customer })
    expect(byId.status).toBe(404)
    expect(byId.headers.get('content-type')).toContain('application/problem+json')
  })

  it('edits a draft; bad fields answer with pointers', async () => {
    const { body } = await call('POST', '/api/shipments', { cookie: quality, body: { customerId: quill } })
    const id = body.shipment.id
    const changed = await call('PATCH', `/api/shipments/${id}`, { cookie: quality, body: { customerPo: 'PO-1', partNumber: 'VFW-T3-375' } })
    expect(changed.status, JSON.stringify(changed.body)).toBe(200)
    expect(changed.body.shipment).toMatchObject({ customerPo: 'PO-1', partNumber: 'VFW-T3-375' })
    expect((await call('PATCH', `/api/shipments/${id}`, { cookie: quality, body: { partNumber: 'NO-SUCH' } })).body.errors[0].pointer).toBe('/partNumber')
    expect((await call('PATCH', `/api/shipments/${id}`, { cookie: quality, body: { plannedShipDate: '20-12-2026' } })).body.errors[0].pointer).toBe('/plannedShipDate')
    expect((await call('POST', '/api/shipments', { cookie: quality, body: { customerId: 999999 } })).status).toBe(422)
    expect((await call('GET', '/api/shipments?status=gone', { cookie: quality })).status).toBe(400)
  })
})
